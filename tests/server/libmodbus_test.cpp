// libmodbus 3.1.6 (Debian 12) as an independent client of the in-process server: every function
// code it has, its exception mapping, and the fault hooks as a poller built on it sees them.
#include "libmodbus_client.hpp"
#include "running_server.hpp"
#include "test_bank.hpp"

#include "floc/modbus/register_bank.hpp"

#include <gtest/gtest.h>

#include <array>
#include <cerrno>
#include <memory>

namespace {

using namespace floc::modbus;
using namespace std::chrono_literals;
using floc::modbus::test::libmodbus_connect;
using floc::modbus::test::modbus_ptr;
using floc::modbus::test::running_server;

// A connected libmodbus context with unit id 1.
modbus_ptr connect(std::uint16_t port) {
    return libmodbus_connect(port, 1);
}

class Libmodbus : public ::testing::Test {
protected:
    Libmodbus() {
        bank.protect(table::holding_registers, 90, 10);
        floc::modbus::test::fill_test_pattern(bank);
        server = std::make_unique<running_server>(bank, server_options{});
        ctx = connect(server->port());
    }

    register_bank bank{bank_sizes{100, 100, 100, 100}};
    std::unique_ptr<running_server> server;
    modbus_ptr ctx;
};

TEST_F(Libmodbus, RegistersWrittenAndReadBack) {
    ASSERT_TRUE(ctx);
    const std::array<std::uint16_t, 3> values{1111, 2222, 3333};
    EXPECT_EQ(modbus_write_registers(ctx.get(), 10, 3, values.data()), 3); // FC 16
    EXPECT_EQ(modbus_write_register(ctx.get(), 13, 4444), 1);              // FC 06
    std::array<std::uint16_t, 4> back{};
    ASSERT_EQ(modbus_read_registers(ctx.get(), 10, 4, back.data()), 4); // FC 03
    EXPECT_EQ(back, (std::array<std::uint16_t, 4>{1111, 2222, 3333, 4444}));
    std::array<std::uint16_t, 2> input{};
    ASSERT_EQ(modbus_read_input_registers(ctx.get(), 98, 2, input.data()), 2); // FC 04
    EXPECT_EQ(input, (std::array<std::uint16_t, 2>{1098, 1099}));
    EXPECT_EQ(bank.registers(table::holding_registers)[13], 4444);
}

TEST_F(Libmodbus, CoilsAndDiscreteInputs) {
    ASSERT_TRUE(ctx);
    const std::array<std::uint8_t, 10> pattern{1, 0, 1, 1, 0, 0, 1, 1, 1, 0};
    EXPECT_EQ(modbus_write_bits(ctx.get(), 20, 10, pattern.data()), 10); // FC 15
    EXPECT_EQ(modbus_write_bit(ctx.get(), 5, 1), 1);                     // FC 05
    std::array<std::uint8_t, 10> back{};
    ASSERT_EQ(modbus_read_bits(ctx.get(), 20, 10, back.data()), 10); // FC 01
    EXPECT_EQ(back, pattern);
    std::array<std::uint8_t, 1> one{};
    ASSERT_EQ(modbus_read_bits(ctx.get(), 5, 1, one.data()), 1);
    EXPECT_EQ(one[0], 1);
    std::array<std::uint8_t, 7> inputs{};
    ASSERT_EQ(modbus_read_input_bits(ctx.get(), 0, 7, inputs.data()), 7); // FC 02
    EXPECT_EQ(inputs, (std::array<std::uint8_t, 7>{1, 0, 0, 1, 0, 0, 1}));
}

TEST_F(Libmodbus, MaskWriteAndReadWrite) {
    ASSERT_TRUE(ctx);
    // AppSpec V1.1b3 §6.16's example: 0x12 AND 0xF2 OR 0x25 -> 0x17.
    ASSERT_EQ(modbus_write_register(ctx.get(), 4, 0x12), 1);
    EXPECT_EQ(modbus_mask_write_register(ctx.get(), 4, 0xF2, 0x25), 1); // FC 22
    EXPECT_EQ(bank.registers(table::holding_registers)[4], 0x17);
    const std::array<std::uint16_t, 2> write{0xAAAA, 0xBBBB};
    std::array<std::uint16_t, 3> read{};
    ASSERT_EQ(modbus_write_and_read_registers(ctx.get(), 30, 2, write.data(), 29, 3, read.data()),
              3); // FC 23: written before read
    EXPECT_EQ(read, (std::array<std::uint16_t, 3>{0, 0xAAAA, 0xBBBB}));
}

TEST_F(Libmodbus, ExceptionsMapToLibmodbusErrors) {
    ASSERT_TRUE(ctx);
    std::array<std::uint16_t, 2> out{};
    errno = 0;
    EXPECT_EQ(modbus_read_registers(ctx.get(), 99, 2, out.data()), -1);
    EXPECT_EQ(errno, EMBXILADD); // 02: past the 100 registers
    errno = 0;
    EXPECT_EQ(modbus_write_register(ctx.get(), 95, 1), -1);
    EXPECT_EQ(errno, EMBXILADD); // 02: a protected range
    // libmodbus refuses quantities over 125 itself; a raw request shows our 03.
    const std::array<std::uint8_t, 6> too_many{1, 0x03, 0x00, 0x00, 0x00, 0x7E};
    ASSERT_GT(modbus_send_raw_request(ctx.get(), too_many.data(), too_many.size()), 0);
    std::array<std::uint8_t, MODBUS_TCP_MAX_ADU_LENGTH> rsp{};
    errno = 0;
    EXPECT_EQ(modbus_receive_confirmation(ctx.get(), rsp.data()), 9);
    EXPECT_EQ(rsp[7], 0x83);
    EXPECT_EQ(rsp[8], 0x03);
}

TEST_F(Libmodbus, FaultsAsAPollerSeesThem) {
    ASSERT_TRUE(ctx);
    std::array<std::uint16_t, 1> out{};
    // Exception 04 on FC 03.
    server->set_faults({{.kind = fault_kind::exception_reply, .function = 0x03, .times = 1}});
    errno = 0;
    EXPECT_EQ(modbus_read_registers(ctx.get(), 0, 1, out.data()), -1);
    EXPECT_EQ(errno, EMBXSFAIL);
    EXPECT_EQ(modbus_read_registers(ctx.get(), 0, 1, out.data()), 1);

    // A wrong transaction id: libmodbus rejects the reply as bad data.
    server->set_faults({{.kind = fault_kind::wrong_transaction_id, .times = 1}});
    errno = 0;
    EXPECT_EQ(modbus_read_registers(ctx.get(), 0, 1, out.data()), -1);
    EXPECT_EQ(errno, EMBBADDATA);

    // A reply later than the client waits: a timeout.
    modbus_ptr slow = connect(server->port());
    ASSERT_TRUE(slow);
    modbus_set_response_timeout(slow.get(), 0, 200000);
    server->set_faults({{.kind = fault_kind::delay_reply, .delay = 1500ms, .times = 1}});
    errno = 0;
    EXPECT_EQ(modbus_read_registers(slow.get(), 0, 1, out.data()), -1);
    EXPECT_EQ(errno, ETIMEDOUT);

    // A dropped connection.
    modbus_ptr dropped = connect(server->port());
    ASSERT_TRUE(dropped);
    server->set_faults({{.kind = fault_kind::drop_connection, .times = 1}});
    EXPECT_EQ(modbus_read_registers(dropped.get(), 0, 1, out.data()), -1);
    EXPECT_EQ(errno, ECONNRESET); // libmodbus reports a closed peer as a reset
}

TEST_F(Libmodbus, SeveralContextsInterleaved) {
    std::array<modbus_ptr, 6> clients;
    for (auto& c : clients) {
        c = connect(server->port());
        ASSERT_TRUE(c);
    }
    for (std::uint16_t round = 0; round < 20; ++round) {
        for (std::size_t k = 0; k < clients.size(); ++k) {
            const auto address = static_cast<int>(40 + k);
            const auto value = static_cast<std::uint16_t>(round * 10 + k);
            ASSERT_EQ(modbus_write_register(clients[k].get(), address, value), 1);
            std::uint16_t back = 0;
            ASSERT_EQ(
                modbus_read_registers(clients[(k + 1) % clients.size()].get(), address, 1, &back),
                1);
            EXPECT_EQ(back, value);
        }
    }
}

} // namespace
