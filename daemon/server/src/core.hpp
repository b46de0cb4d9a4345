// Internals of the Modbus/TCP server: the state shared by the acceptor and the sessions, and one
// session per connection. Only the io_context thread touches them.
#pragma once

#include "floc/modbus/asio.hpp"

#include "floc/modbus/frame.hpp"
#include "floc/modbus/server.hpp"

#include <chrono>
#include <deque>
#include <map>
#include <memory>

namespace floc::modbus::detail {

class session;

class server_core : public std::enable_shared_from_this<server_core> {
public:
    server_core(boost::asio::io_context& io, register_space& space, server_options options);
    server_core(const server_core&) = delete;
    server_core& operator=(const server_core&) = delete;

    std::optional<std::string> start();
    // Closes the acceptor and every session; with `report`, each close is an event.
    void stop(bool report);

    // For sessions.
    [[nodiscard]] register_space& space() { return *space_; }
    [[nodiscard]] const server_options& options() const { return options_; }
    [[nodiscard]] fault_plan& faults() { return faults_; }
    [[nodiscard]] server_statistics& stats() { return stats_; }
    void record(std::uint32_t address_v4, std::uint8_t function);
    void remove(std::uint64_t connection);
    void emit(event_kind kind, const client_info& client, close_reason reason = {},
              std::string detail = {});

    // For the server facade.
    [[nodiscard]] std::uint16_t port() const { return port_; }
    [[nodiscard]] std::size_t connections() const { return sessions_.size(); }
    [[nodiscard]] const std::map<std::uint32_t, client_record>& clients() const { return clients_; }

private:
    void do_accept();
    void on_accept(const boost::system::error_code& ec, boost::asio::ip::tcp::socket socket);
    // Closes the longest-idle session without pending replies; false if there is none.
    bool make_room();
    void refuse(boost::asio::ip::tcp::socket& socket, const client_info& client, close_reason why);

    boost::asio::ip::tcp::acceptor acceptor_;
    boost::asio::steady_timer accept_retry_;
    register_space* space_;
    server_options options_;
    fault_plan faults_;
    server_statistics stats_;
    std::map<std::uint32_t, client_record> clients_;
    std::map<std::uint64_t, std::weak_ptr<session>> sessions_; // by connection number
    std::uint64_t next_connection_ = 1;
    std::uint16_t port_ = 0;
    bool running_ = false;
    bool stopped_ = false;
};

class session : public std::enable_shared_from_this<session> {
public:
    session(std::shared_ptr<server_core> core, boost::asio::ip::tcp::socket socket,
            client_info client);
    session(const session&) = delete;
    session& operator=(const session&) = delete;

    void start();
    // Closes the socket and cancels the timers; pending handlers then finish quietly.
    void close(close_reason why, std::string detail = {});
    // No replies waiting to be sent.
    [[nodiscard]] bool quiet() const { return replies_.empty(); }
    [[nodiscard]] std::chrono::steady_clock::time_point last_activity() const {
        return last_activity_;
    }

private:
    struct reply {
        std::array<std::uint8_t, max_adu_size> bytes{};
        std::size_t size = 0;
        bool ready = false;                               // may be written
        std::unique_ptr<boost::asio::steady_timer> delay; // a delay_reply fault
    };

    // Decodes and answers what is buffered, writes what is ready, reads when there is room.
    void pump();
    void process_input();
    void answer(const decoded_frame& frame);
    void do_read();
    void on_read(const boost::system::error_code& ec, std::size_t n);
    void do_write();
    void on_write(const boost::system::error_code& ec);
    void arm_idle_timer(std::chrono::steady_clock::duration after);
    void on_idle_timer(const boost::system::error_code& ec);
    [[nodiscard]] bool backlogged() const;

    std::shared_ptr<server_core> core_;
    boost::asio::ip::tcp::socket socket_;
    boost::asio::steady_timer idle_timer_;
    frame_buffer input_;
    std::deque<reply> replies_; // in request order; the front is written first
    std::size_t held_ = 0;      // replies held back by a delay_reply fault
    client_info client_;
    std::chrono::steady_clock::time_point last_activity_;
    bool reading_ = false;
    bool writing_ = false;
    bool peer_done_ = false; // the client sent EOF: answer what is there, then close
    bool closed_ = false;
};

} // namespace floc::modbus::detail
