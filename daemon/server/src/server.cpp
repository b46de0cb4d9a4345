#include "core.hpp"

#include <algorithm>
#include <numeric>

namespace floc::modbus {

namespace asio = boost::asio;
using tcp = asio::ip::tcp;

std::string_view to_string(close_reason reason) {
    switch (reason) {
    case close_reason::peer_closed:
        return "closed by the client";
    case close_reason::idle_timeout:
        return "idle timeout";
    case close_reason::malformed_frame:
        return "malformed frame";
    case close_reason::fault_drop:
        return "dropped by a fault rule";
    case close_reason::replaced:
        return "closed to make room for a new connection";
    case close_reason::server_stopped:
        return "server stopped";
    case close_reason::io_error:
        return "socket error";
    case close_reason::not_allowed:
        return "address not allowed";
    case close_reason::server_full:
        return "connection limit reached";
    }
    return "unknown reason";
}

std::uint64_t client_record::total() const {
    return std::accumulate(by_function.begin(), by_function.end(), std::uint64_t{0});
}

std::uint64_t client_record::writes() const {
    std::uint64_t n = 0;
    for (std::size_t fc = 0; fc < by_function.size(); ++fc) {
        if (is_write_function(static_cast<std::uint8_t>(fc))) {
            n += by_function.at(fc);
        }
    }
    return n;
}

namespace detail {

namespace {

constexpr auto accept_retry_after = std::chrono::milliseconds{100};

} // namespace

server_core::server_core(asio::io_context& io, register_space& space, server_options options)
    : acceptor_(io), accept_retry_(io), space_(&space), options_(std::move(options)) {
    options_.max_connections = std::max<std::size_t>(options_.max_connections, 1);
    options_.max_pending = std::max<std::size_t>(options_.max_pending, 1);
}

std::optional<std::string> server_core::start() {
    if (running_ || stopped_) {
        return "the Modbus/TCP server was started before; it cannot be started again";
    }
    if (const auto bad = identity_error(options_.identity)) {
        return *bad;
    }
    boost::system::error_code ec;
    const asio::ip::address_v4 address = asio::ip::make_address_v4(options_.address, ec);
    const std::string where = options_.address + ":" + std::to_string(options_.port);
    if (ec) {
        return "cannot listen on " + where + ": \"" + options_.address +
               "\" is not an IPv4 address; expected four numbers like 127.0.0.1";
    }
    const tcp::endpoint endpoint{address, options_.port};
    const auto fail = [&](std::string_view step) -> std::optional<std::string> {
        boost::system::error_code ignored;
        acceptor_.close(ignored);
        return "cannot listen on " + where + ": " + std::string{step} + ": " + ec.message();
    };
    if (acceptor_.open(endpoint.protocol(), ec)) {
        return fail("socket");
    }
    if (acceptor_.set_option(tcp::acceptor::reuse_address(true), ec)) {
        return fail("SO_REUSEADDR");
    }
    if (acceptor_.bind(endpoint, ec)) {
        return fail("bind");
    }
    if (acceptor_.listen(tcp::socket::max_listen_connections, ec)) {
        return fail("listen");
    }
    port_ = acceptor_.local_endpoint(ec).port();
    running_ = true;
    do_accept();
    return std::nullopt;
}

void server_core::stop(bool report) {
    if (stopped_) {
        return;
    }
    stopped_ = true;
    if (!report) {
        options_.on_event = nullptr; // the owner may be half destroyed
    }
    running_ = false;
    boost::system::error_code ignored;
    acceptor_.close(ignored);
    accept_retry_.cancel();
    // close() removes the session from the map, so walk a copy.
    const auto open = sessions_;
    for (const auto& [id, weak] : open) {
        if (const auto s = weak.lock()) {
            s->close(close_reason::server_stopped);
        }
    }
    sessions_.clear();
}

void server_core::record(std::uint32_t address_v4, std::uint8_t function) {
    ++clients_[address_v4].by_function.at(function);
}

void server_core::remove(std::uint64_t connection) {
    sessions_.erase(connection);
}

void server_core::emit(event_kind kind, const client_info& client, close_reason reason,
                       std::string detail) {
    if (options_.on_event) {
        options_.on_event(server_event{kind, client, reason, std::move(detail)});
    }
}

void server_core::do_accept() {
    acceptor_.async_accept(
        [self = shared_from_this()](const boost::system::error_code& ec, tcp::socket socket) {
            self->on_accept(ec, std::move(socket));
        });
}

void server_core::on_accept(const boost::system::error_code& ec, tcp::socket socket) {
    if (!running_) {
        return;
    }
    if (ec) {
        if (ec == asio::error::operation_aborted) {
            return;
        }
        // Out of file descriptors and the like: try again a little later instead of spinning.
        emit(event_kind::accept_failed, {}, {}, ec.message());
        accept_retry_.expires_after(accept_retry_after);
        accept_retry_.async_wait([self = shared_from_this()](const boost::system::error_code& e) {
            if (!e && self->running_) {
                self->do_accept();
            }
        });
        return;
    }
    boost::system::error_code peer_ec;
    const tcp::endpoint peer = socket.remote_endpoint(peer_ec);
    if (peer_ec || !peer.address().is_v4()) {
        // Gone before we looked, or not IPv4 (the acceptor is IPv4 only): nothing to serve.
        boost::system::error_code ignored;
        socket.close(ignored);
        do_accept();
        return;
    }
    client_info client;
    client.address_v4 = peer.address().to_v4().to_uint();
    client.port = peer.port();
    client.connection = next_connection_++;

    if (options_.allow && !options_.allow(client.address_v4)) {
        refuse(socket, client, close_reason::not_allowed);
    } else if (sessions_.size() >= options_.max_connections &&
               (options_.when_full == capacity_policy::refuse_new || !make_room())) {
        refuse(socket, client, close_reason::server_full);
    } else {
        boost::system::error_code ignored;
        socket.set_option(tcp::no_delay(true), ignored); // TCP guide §4.3.2
        socket.set_option(asio::socket_base::keep_alive(true), ignored);
        auto s = std::make_shared<session>(shared_from_this(), std::move(socket), client);
        sessions_[client.connection] = s;
        ++stats_.connections_accepted;
        emit(event_kind::connection_opened, client);
        s->start();
    }
    if (running_) {
        do_accept();
    }
}

bool server_core::make_room() {
    std::shared_ptr<session> victim;
    for (const auto& [id, weak] : sessions_) {
        const auto s = weak.lock();
        if (s && s->quiet() && (!victim || s->last_activity() < victim->last_activity())) {
            victim = s;
        }
    }
    if (!victim) {
        return false;
    }
    ++stats_.connections_replaced;
    victim->close(close_reason::replaced);
    return true;
}

void server_core::refuse(tcp::socket& socket, const client_info& client, close_reason why) {
    boost::system::error_code ignored;
    socket.shutdown(tcp::socket::shutdown_both, ignored);
    socket.close(ignored);
    ++stats_.connections_refused;
    emit(event_kind::connection_refused, client, why);
}

} // namespace detail

server::server(asio::io_context& io, register_space& space, server_options options)
    : core_(std::make_shared<detail::server_core>(io, space, std::move(options))) {}

server::~server() {
    core_->stop(false);
}

std::optional<std::string> server::start() {
    return core_->start();
}
void server::stop() {
    core_->stop(true);
}
std::uint16_t server::port() const {
    return core_->port();
}
std::size_t server::connections() const {
    return core_->connections();
}
const server_statistics& server::statistics() const {
    return core_->stats();
}
const std::map<std::uint32_t, client_record>& server::clients() const {
    return core_->clients();
}
void server::set_faults(const std::vector<fault_rule>& rules) {
    core_->faults().set(rules);
}
std::size_t server::active_faults() const {
    return core_->faults().active();
}

} // namespace floc::modbus
