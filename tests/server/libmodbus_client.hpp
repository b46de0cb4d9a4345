// Test support: a libmodbus 3.1.6 TCP client context that closes itself.
#pragma once

#include <modbus.h>

#include <cstdint>
#include <memory>

namespace floc::modbus::test {

struct modbus_closer {
    void operator()(modbus_t* ctx) const {
        modbus_close(ctx);
        modbus_free(ctx);
    }
};
using modbus_ptr = std::unique_ptr<modbus_t, modbus_closer>;

// A context connected to 127.0.0.1:`port` with a 2 s response timeout and error recovery off
// (libmodbus's link recovery would retry forever); empty if it cannot connect. `unit` < 0 keeps
// libmodbus's TCP default unit id, 0xFF.
inline modbus_ptr libmodbus_connect(std::uint16_t port, int unit = -1) {
    modbus_ptr ctx{modbus_new_tcp("127.0.0.1", port)};
    if (!ctx) {
        return ctx;
    }
    if (unit >= 0) {
        modbus_set_slave(ctx.get(), unit);
    }
    modbus_set_response_timeout(ctx.get(), 2, 0);
    modbus_set_error_recovery(ctx.get(), MODBUS_ERROR_RECOVERY_NONE);
    if (modbus_connect(ctx.get()) != 0) {
        ctx.reset();
    }
    return ctx;
}

} // namespace floc::modbus::test
