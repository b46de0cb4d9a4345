// A read-only Modbus/TCP client on an io_context: it connects, reads a fixed list of register
// ranges with function 03 or 04 every period, and hands each cycle's words (or why the cycle
// failed) to its owner. It can send nothing but those reads. Every step is bounded by a timeout;
// after a failure it closes the connection and tries again after `retry`, quietly, for ever.
// Framing through floc::modbus_codec. All members are called from the io_context's thread.
#pragma once

#include <chrono>
#include <cstdint>
#include <functional>
#include <memory>
#include <string>
#include <vector>

namespace boost::asio {
class io_context;
} // namespace boost::asio

namespace floc::sim {

// One read: function 03 (holding registers) or 04 (input registers).
struct register_read {
    std::uint8_t function = 3;
    std::uint16_t address = 0;
    std::uint16_t count = 0; // 1..125
};

struct reader_options {
    std::string address = "127.0.0.1"; // IPv4 address of the server
    std::uint16_t port = 0;
    std::uint8_t unit_id = 1;
    std::chrono::milliseconds period{1000};  // from the start of one cycle to the next
    std::chrono::milliseconds timeout{2000}; // connect, and each request's reply
    std::chrono::milliseconds retry{3000};   // after a failure
};

// The outcome of one cycle.
struct read_cycle {
    bool ok = false;
    std::string error;                             // why not, e.g. "connection refused"
    std::vector<std::vector<std::uint16_t>> words; // ok: one vector per read, in order
};

class modbus_reader {
public:
    modbus_reader(boost::asio::io_context& io, reader_options options,
                  std::vector<register_read> reads,
                  std::function<void(const read_cycle&)> on_cycle);
    ~modbus_reader(); // stops
    modbus_reader(const modbus_reader&) = delete;
    modbus_reader& operator=(const modbus_reader&) = delete;

    void start();
    // Closes the connection and cancels every timer; on_cycle is not called again.
    void stop();
    [[nodiscard]] bool connected() const;
    [[nodiscard]] std::uint64_t requests_sent() const;

private:
    struct impl;
    std::shared_ptr<impl> impl_;
};

} // namespace floc::sim
