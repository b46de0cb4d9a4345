// One Modbus/TCP client connection on an io_context, shared by flocsim's clients of a floc
// advisory server (the read-only modbus_reader and the lab entries' writer): connect, then one
// request at a time, each step bounded by a timeout, framing by floc::modbus_codec. The link
// sends whatever PDU its owner gives it; which function codes a client may send is decided by
// that client. Every failure closes the connection; close() drops the handlers still pending, so
// that a stopped owner is never called back. All members are called from the io_context's thread.
#pragma once

#include "floc/modbus/asio.hpp"
#include "floc/modbus/frame.hpp"

#include <array>
#include <chrono>
#include <cstdint>
#include <functional>
#include <memory>
#include <optional>
#include <span>
#include <string>
#include <vector>

namespace floc::sim::detail {

struct link_options {
    std::string address = "127.0.0.1"; // IPv4 address of the server
    std::uint16_t port = 0;
    std::uint8_t unit_id = 1;
    std::chrono::milliseconds timeout{2000}; // connect, and each request's reply
};

class client_link : public std::enable_shared_from_this<client_link> {
public:
    // error: empty when connected, else why not.
    using connect_handler = std::function<void(const std::string& error)>;
    // error: empty when a reply came; pdu: the reply's PDU, function code first (an exception
    // reply too; the owner tells them apart).
    using reply_handler =
        std::function<void(const std::string& error, std::span<const std::uint8_t> pdu)>;

    client_link(boost::asio::io_context& io, link_options options);
    client_link(const client_link&) = delete;
    client_link& operator=(const client_link&) = delete;

    void connect(connect_handler done);
    // Sends one request; `what` names it in errors ("function 3 at 100").
    void request(std::span<const std::uint8_t> pdu, std::string what, reply_handler done);
    // Closes the connection; pending handlers are not called.
    void close();

    [[nodiscard]] bool connected() const { return connected_; }
    [[nodiscard]] std::uint64_t requests_sent() const { return sent_; }

private:
    using error_code = boost::system::error_code;

    void on_header(const error_code& ec);
    void on_body(const error_code& ec, std::uint16_t length);
    void finish(const std::string& error, std::span<const std::uint8_t> pdu);
    void arm();
    void disarm();
    [[nodiscard]] std::string io_failure(const error_code& ec) const;
    [[nodiscard]] bool current(std::uint64_t gen) const { return gen == generation_; }

    boost::asio::ip::tcp::socket socket_;
    boost::asio::steady_timer deadline_;
    link_options options_;
    bool connected_ = false;
    bool timed_out_ = false;
    std::uint64_t generation_ = 0; // bumped by close(): handlers of an older one stop
    std::uint64_t step_ = 0; // counts timed steps, so that a late timer cannot end a finished one
    std::uint16_t transaction_ = 0;
    std::string what_;
    reply_handler pending_;
    std::array<std::uint8_t, modbus::max_adu_size> out_{};
    std::array<std::uint8_t, modbus::max_adu_size> in_{};
    std::uint64_t sent_ = 0;
};

// "2 s", "1500 ms".
[[nodiscard]] std::string millis_text(std::chrono::milliseconds d);

// The PDU of a read of `count` registers from `address` (function 03 or 04).
[[nodiscard]] std::array<std::uint8_t, 5> read_pdu(std::uint8_t function, std::uint16_t address,
                                                   std::uint16_t count);
// The exception code of a reply that is an exception to `function`; 0 when it is not one.
[[nodiscard]] std::uint8_t exception_in(std::span<const std::uint8_t> reply, std::uint8_t function);
// The registers of a reply to a read of `count` registers with `function`; empty when the reply
// does not fit that read.
[[nodiscard]] std::optional<std::vector<std::uint16_t>>
read_reply_words(std::span<const std::uint8_t> reply, std::uint8_t function, std::uint16_t count);

} // namespace floc::sim::detail
