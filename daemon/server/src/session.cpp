#include "core.hpp"

#include "floc/modbus/request.hpp"
#include "floc/modbus/respond.hpp"

#include <algorithm>

namespace floc::modbus::detail {

namespace asio = boost::asio;
using tcp = asio::ip::tcp;
using clock = std::chrono::steady_clock;

session::session(std::shared_ptr<server_core> core, tcp::socket socket, client_info client)
    : core_(std::move(core)), socket_(std::move(socket)), idle_timer_(socket_.get_executor()),
      client_(client), last_activity_(clock::now()) {}

void session::start() {
    if (core_->options().idle_timeout.count() > 0) {
        arm_idle_timer(core_->options().idle_timeout);
    }
    pump();
}

void session::close(close_reason why, std::string detail) {
    if (closed_) {
        return;
    }
    closed_ = true;
    boost::system::error_code ignored;
    socket_.shutdown(tcp::socket::shutdown_both, ignored);
    socket_.close(ignored);
    idle_timer_.cancel();
    // The replies stay until the session is destroyed: a write in flight may still refer to
    // the front one. Their timers are cancelled so that nothing keeps the session alive.
    for (reply& r : replies_) {
        if (r.delay) {
            r.delay->cancel();
        }
    }
    if (why == close_reason::idle_timeout) {
        ++core_->stats().connections_timed_out;
    }
    core_->remove(client_.connection);
    core_->emit(event_kind::connection_closed, client_, why, std::move(detail));
}

bool session::backlogged() const {
    // With this many replies queued the session stops taking requests off the socket until the
    // client reads its replies; TCP flow control then holds a client that pipelines too far.
    return replies_.size() >= 2 * core_->options().max_pending;
}

void session::pump() {
    if (closed_) {
        return;
    }
    process_input();
    if (closed_) {
        return;
    }
    do_write();
    if (peer_done_ && replies_.empty()) {
        close(close_reason::peer_closed);
        return;
    }
    if (!reading_ && !peer_done_ && !backlogged()) {
        do_read();
    }
}

void session::process_input() {
    while (!closed_ && !backlogged()) {
        const decoded_frame frame = input_.next();
        if (frame.status == decode_status::need_more) {
            return;
        }
        if (frame.status == decode_status::complete) {
            answer(frame);
        } else if (frame.action == frame_action::discard) {
            // TCP guide §4.4.2.2: not Modbus; skip it without a reply.
            ++core_->stats().discarded_frames;
            core_->emit(event_kind::frame_discarded, client_, {},
                        std::string{to_string(frame.error)});
        } else {
            ++core_->stats().malformed_frames;
            close(close_reason::malformed_frame, std::string{to_string(frame.error)});
            return;
        }
        input_.consume(frame.size);
    }
}

void session::answer(const decoded_frame& frame) {
    server_statistics& stats = core_->stats();
    ++stats.requests;
    last_activity_ = clock::now();
    client_.unit_id = frame.header.unit_id;
    const std::uint8_t function = frame.pdu[0];
    core_->record(client_.address_v4, function);

    std::array<std::uint8_t, max_pdu_size> pdu{};
    std::size_t n = 0;
    fault_effect fault;
    if (held_ >= core_->options().max_pending) {
        // TCP guide §4.4.2.2: no transaction resource free -> 06 (server busy). Only requests
        // still being worked on (held back) count; answered ones just wait for the socket. The
        // fault rules act on requests the server takes on, not on this refusal.
        n = encode_exception(function, exception_code::server_device_busy, pdu);
        ++stats.busy_replies;
    } else {
        const parse_result parsed = parse_request(frame.pdu);
        fault =
            core_->faults().apply(function, parsed.ok() ? spans_of(parsed.value) : request_spans{});
        if (fault.drop || fault.exception || fault.wrong_transaction_id ||
            fault.delay.count() > 0) {
            ++stats.faults_applied;
        }
        if (fault.drop) {
            close(close_reason::fault_drop);
            return;
        }
        if (fault.exception) {
            n = encode_exception(function, *fault.exception, pdu);
        } else if (!parsed.ok()) {
            n = encode_exception(function, *parsed.error, pdu);
        } else {
            n = handle_request(parsed.value, core_->space(), client_, core_->options().identity,
                               pdu);
        }
    }
    if (closed_) {
        return; // the register space stopped the server
    }
    if ((pdu[0] & exception_flag) != 0) {
        ++stats.exception_replies;
    }

    reply& r = replies_.emplace_back();
    const std::uint16_t tid = fault.wrong_transaction_id
                                  ? static_cast<std::uint16_t>(frame.header.transaction_id + 1U)
                                  : frame.header.transaction_id;
    r.size = encode_frame(tid, frame.header.unit_id, std::span{pdu}.first(n), r.bytes);
    if (fault.delay.count() <= 0) {
        r.ready = true;
        return;
    }
    ++held_;
    r.delay = std::make_unique<asio::steady_timer>(socket_.get_executor(), fault.delay);
    // Deque elements keep their address while others are added or removed at the ends, and
    // this one is not removed before it is ready.
    r.delay->async_wait(
        [self = shared_from_this(), slot = &r](const boost::system::error_code& ec) {
            if (ec || self->closed_) {
                return;
            }
            slot->ready = true;
            --self->held_;
            self->last_activity_ = clock::now();
            self->pump();
        });
}

void session::do_read() {
    const std::span<std::uint8_t> space = input_.free_space();
    if (space.empty()) {
        return; // cannot happen while complete frames are consumed; never read into nothing
    }
    reading_ = true;
    socket_.async_read_some(asio::buffer(space.data(), space.size()),
                            [self = shared_from_this()](const boost::system::error_code& ec,
                                                        std::size_t n) { self->on_read(ec, n); });
}

void session::on_read(const boost::system::error_code& ec, std::size_t n) {
    reading_ = false;
    if (closed_) {
        return;
    }
    if (ec) {
        if (ec == asio::error::eof) {
            // The client is done sending. A partial frame is dropped (it vanished mid-frame);
            // complete requests are still answered before the connection closes.
            peer_done_ = true;
            pump();
        } else if (ec == asio::error::connection_reset) {
            close(close_reason::peer_closed, ec.message());
        } else if (ec != asio::error::operation_aborted) {
            close(close_reason::io_error, ec.message());
        }
        return;
    }
    input_.commit(n);
    pump();
}

void session::do_write() {
    if (writing_ || replies_.empty() || !replies_.front().ready) {
        return;
    }
    writing_ = true;
    const reply& r = replies_.front();
    asio::async_write(socket_, asio::buffer(r.bytes.data(), r.size),
                      [self = shared_from_this()](const boost::system::error_code& ec,
                                                  std::size_t /*n*/) { self->on_write(ec); });
}

void session::on_write(const boost::system::error_code& ec) {
    writing_ = false;
    if (closed_) {
        return;
    }
    if (ec) {
        if (ec == asio::error::broken_pipe || ec == asio::error::connection_reset) {
            close(close_reason::peer_closed, ec.message());
        } else if (ec != asio::error::operation_aborted) {
            close(close_reason::io_error, ec.message());
        }
        return;
    }
    replies_.pop_front();
    last_activity_ = clock::now();
    pump();
}

void session::arm_idle_timer(clock::duration after) {
    idle_timer_.expires_after(after);
    idle_timer_.async_wait([self = shared_from_this()](const boost::system::error_code& ec) {
        self->on_idle_timer(ec);
    });
}

void session::on_idle_timer(const boost::system::error_code& ec) {
    if (ec || closed_) {
        return;
    }
    const clock::duration timeout = core_->options().idle_timeout;
    const clock::duration since = clock::now() - last_activity_;
    if (since < timeout) {
        arm_idle_timer(timeout - since);
    } else if (held_ > 0) {
        arm_idle_timer(timeout); // a delay_reply fault is holding a reply back on purpose
    } else {
        close(close_reason::idle_timeout);
    }
}

} // namespace floc::modbus::detail
