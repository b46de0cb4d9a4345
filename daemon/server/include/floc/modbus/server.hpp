// A Modbus/TCP server on one Boost.Asio io_context: an acceptor and one session per connection,
// answering from a register_space through the codec. Pipelined requests are answered in order,
// one write in flight per socket; a connection cap, an idle timeout, an accept-time allowlist,
// per-client statistics and fault injection. Every member function is called from the thread
// that runs the io_context (or while it is not running). No libmodbus.
#pragma once

#include "floc/modbus/device_identity.hpp"
#include "floc/modbus/faults.hpp"
#include "floc/modbus/register_space.hpp"

#include <array>
#include <chrono>
#include <cstddef>
#include <cstdint>
#include <functional>
#include <map>
#include <memory>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace boost::asio {
class io_context;
} // namespace boost::asio

namespace floc::modbus {

namespace detail {
class server_core;
} // namespace detail

// What happens to a new connection when max_connections are open.
enum class capacity_policy : std::uint8_t {
    close_longest_idle, // close the connection idle the longest (TCP guide §4.2.1); refuse the
                        // new one if every connection has replies pending
    refuse_new,         // close the new connection at once
};

// Why a connection was closed or refused.
enum class close_reason : std::uint8_t {
    peer_closed,     // the client closed or reset it
    idle_timeout,    // no request for idle_timeout
    malformed_frame, // an MBAP length that cannot be framed
    fault_drop,      // a drop_connection fault rule
    replaced,        // closed to make room for a new connection (close_longest_idle)
    server_stopped,  // server::stop()
    io_error,        // a socket error other than the peer closing
    not_allowed,     // refused: the allowlist said no
    server_full,     // refused: max_connections open
};

// A short description of `reason` for logs ("idle timeout").
[[nodiscard]] std::string_view to_string(close_reason reason);

enum class event_kind : std::uint8_t {
    connection_opened,
    connection_closed,  // `reason` says why
    connection_refused, // `reason` is not_allowed or server_full
    frame_discarded,    // a frame with a protocol id other than 0 was skipped
    accept_failed,      // accept() failed (`detail`); the server retries after 100 ms
};

// Something the owner may want to log. The server itself does not log.
struct server_event {
    event_kind kind = event_kind::connection_opened;
    client_info client; // address, port and connection number (unit id: of the last request)
    close_reason reason = close_reason::peer_closed; // connection_closed, connection_refused
    std::string detail;                              // the socket error's text, or empty
};

struct server_options {
    std::string address = "127.0.0.1"; // IPv4 address to listen on; "0.0.0.0" for all
    std::uint16_t port = 0;            // 0: the system picks a free port, see server::port()
    std::size_t max_connections = 8;   // open connections at most (at least 1)
    capacity_policy when_full = capacity_policy::close_longest_idle;
    std::chrono::milliseconds idle_timeout{std::chrono::minutes{5}}; // 0: never
    std::size_t max_pending = 16; // requests held back (delay faults) per connection before
                                  // more get 06 (busy); with twice this many replies queued the
                                  // connection stops reading until the client takes them
    device_identity identity;     // answers to FC 43 / MEI 14
    std::function<bool(std::uint32_t address_v4)> allow; // accept-time allowlist; empty: all
    std::function<void(const server_event&)> on_event;   // for logging; must not call stop()
};

struct server_statistics {
    std::uint64_t connections_accepted = 0;
    std::uint64_t connections_refused = 0;   // allowlist or connection cap
    std::uint64_t connections_replaced = 0;  // closed to make room for a new one
    std::uint64_t connections_timed_out = 0; // closed by the idle timeout
    std::uint64_t requests = 0;              // complete Modbus frames received
    std::uint64_t exception_replies = 0;     // replies that carry an exception code
    std::uint64_t busy_replies = 0;          // of those, 06 because max_pending was reached
    std::uint64_t discarded_frames = 0;      // protocol id not 0: skipped without a reply
    std::uint64_t malformed_frames = 0;      // impossible MBAP length: connection closed
    std::uint64_t faults_applied = 0;        // requests a fault rule acted on
};

// The requests one client address has sent, by function code (every complete Modbus frame,
// answered or refused).
struct client_record {
    std::array<std::uint64_t, 256> by_function{}; // indexed by the function code byte
    [[nodiscard]] std::uint64_t total() const;    // all requests
    [[nodiscard]] std::uint64_t writes() const;   // requests with a write function code
};

class server {
public:
    // `space` must outlive the server.
    server(boost::asio::io_context& io, register_space& space, server_options options);
    ~server(); // stops without reporting events (the owner may be half destroyed)
    server(const server&) = delete;
    server& operator=(const server&) = delete;

    // Binds, listens and starts accepting; returns why it could not (bad address, port in use).
    [[nodiscard]] std::optional<std::string> start();
    // Closes the acceptor and every connection; pending handlers finish, io_context::run returns
    // once nothing else is pending. The server cannot be started again.
    void stop();

    // The bound port (useful with port 0); 0 before start().
    [[nodiscard]] std::uint16_t port() const;
    // Open connections.
    [[nodiscard]] std::size_t connections() const;
    // Counts since start().
    [[nodiscard]] const server_statistics& statistics() const;
    // Requests by function code for every client address seen, keyed by IPv4 address.
    [[nodiscard]] const std::map<std::uint32_t, client_record>& clients() const;
    // Replaces the fault rules (empty: off, the default); applies to the next request on.
    void set_faults(const std::vector<fault_rule>& rules);
    // Fault rules still active (rules with a limit retire when spent).
    [[nodiscard]] std::size_t active_faults() const;

private:
    std::shared_ptr<detail::server_core> core_;
};

} // namespace floc::modbus
