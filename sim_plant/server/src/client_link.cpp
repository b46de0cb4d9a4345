#include "client_link.hpp"

#include "floc/modbus/protocol.hpp"

#include <boost/asio/read.hpp>
#include <boost/asio/write.hpp>

namespace floc::sim::detail {

namespace asio = boost::asio;
using tcp = asio::ip::tcp;

std::string millis_text(std::chrono::milliseconds d) {
    return d.count() % 1000 == 0 ? std::to_string(d.count() / 1000) + " s"
                                 : std::to_string(d.count()) + " ms";
}

std::array<std::uint8_t, 5> read_pdu(std::uint8_t function, std::uint16_t address,
                                     std::uint16_t count) {
    return {function, static_cast<std::uint8_t>(address >> 8U),
            static_cast<std::uint8_t>(address & 0xFFU), static_cast<std::uint8_t>(count >> 8U),
            static_cast<std::uint8_t>(count & 0xFFU)};
}

std::uint8_t exception_in(std::span<const std::uint8_t> reply, std::uint8_t function) {
    const bool exception = reply.size() == 2 && reply[0] == (function | modbus::exception_flag);
    return exception ? reply[1] : 0;
}

std::optional<std::vector<std::uint16_t>>
read_reply_words(std::span<const std::uint8_t> reply, std::uint8_t function, std::uint16_t count) {
    if (reply.size() != 2U + 2U * count || reply[0] != function || reply[1] != 2U * count) {
        return std::nullopt;
    }
    std::vector<std::uint16_t> words(count);
    for (std::size_t i = 0; i < words.size(); ++i) {
        words[i] = static_cast<std::uint16_t>((reply[2 + 2 * i] << 8U) | reply[3 + 2 * i]);
    }
    return words;
}

client_link::client_link(asio::io_context& io, link_options options)
    : socket_(io), deadline_(io), options_(std::move(options)) {}

void client_link::connect(connect_handler done) {
    close();
    error_code ec;
    const asio::ip::address_v4 address = asio::ip::make_address_v4(options_.address, ec);
    if (ec) {
        done("\"" + options_.address + "\" is not an IPv4 address");
        return;
    }
    if (socket_.open(tcp::v4(), ec)) {
        done("cannot open a socket: " + ec.message());
        return;
    }
    arm();
    socket_.async_connect(
        tcp::endpoint{address, options_.port}, [self = shared_from_this(), gen = generation_,
                                                done = std::move(done)](const error_code& e) {
            if (!self->current(gen)) {
                return;
            }
            self->disarm();
            if (e) {
                const std::string why =
                    self->timed_out_ ? "no connection within " + millis_text(self->options_.timeout)
                                     : e.message();
                self->close();
                done(why);
                return;
            }
            error_code ignored;
            self->socket_.set_option(tcp::no_delay(true), ignored);
            self->connected_ = true;
            done({});
        });
}

void client_link::request(std::span<const std::uint8_t> pdu, std::string what, reply_handler done) {
    what_ = std::move(what);
    pending_ = std::move(done);
    ++transaction_;
    const std::size_t n = modbus::encode_frame(transaction_, options_.unit_id, pdu, out_);
    arm();
    asio::async_write(
        socket_, asio::buffer(out_.data(), n),
        [self = shared_from_this(), gen = generation_](const error_code& e, std::size_t) {
            if (!self->current(gen)) {
                return;
            }
            if (e) {
                self->finish(self->io_failure(e), {});
                return;
            }
            ++self->sent_;
            asio::async_read(self->socket_, asio::buffer(self->in_.data(), modbus::mbap_size),
                             [self, gen](const error_code& e2, std::size_t) {
                                 if (self->current(gen)) {
                                     self->on_header(e2);
                                 }
                             });
        });
}

void client_link::on_header(const error_code& ec) {
    if (ec) {
        finish(io_failure(ec), {});
        return;
    }
    const auto length = static_cast<std::uint16_t>((in_[4] << 8U) | in_[5]);
    if (length < modbus::min_mbap_length || length > modbus::max_mbap_length) {
        finish("a reply with an MBAP length of " + std::to_string(length), {});
        return;
    }
    asio::async_read(
        socket_, asio::buffer(in_.data() + modbus::mbap_size, length - 1U),
        [self = shared_from_this(), gen = generation_, length](const error_code& e, std::size_t) {
            if (self->current(gen)) {
                self->on_body(e, length);
            }
        });
}

void client_link::on_body(const error_code& ec, std::uint16_t length) {
    if (ec) {
        finish(io_failure(ec), {});
        return;
    }
    const modbus::decoded_frame f = modbus::decode_frame(
        std::span<const std::uint8_t>{in_.data(), modbus::mbap_size - 1U + length});
    if (f.status != modbus::decode_status::complete || f.pdu.empty()) {
        finish("a malformed reply to " + what_, {});
        return;
    }
    if (f.header.transaction_id != transaction_) {
        // TCP guide V1.0b §4.4.1.3: a reply that matches no pending request is not taken.
        finish("a reply with transaction id " + std::to_string(f.header.transaction_id) +
                   " to request " + std::to_string(transaction_),
               {});
        return;
    }
    finish({}, f.pdu);
}

// Ends the request under way: the reply to its owner, or the failure (the connection closed).
void client_link::finish(const std::string& error, std::span<const std::uint8_t> pdu) {
    disarm();
    reply_handler done = std::move(pending_);
    pending_ = nullptr;
    if (!error.empty()) {
        close();
    }
    if (done) {
        done(error, pdu);
    }
}

std::string client_link::io_failure(const error_code& ec) const {
    if (timed_out_) {
        return "no reply within " + millis_text(options_.timeout);
    }
    if (ec == asio::error::eof) {
        return "the server closed the connection";
    }
    return ec.message();
}

// A timeout for the step under way: when it passes, the socket is closed and the step's handler
// runs with operation_aborted and timed_out_ set.
void client_link::arm() {
    timed_out_ = false;
    ++step_;
    deadline_.expires_after(options_.timeout);
    deadline_.async_wait(
        [self = shared_from_this(), gen = generation_, step = step_](const error_code& e) {
            if (e || !self->current(gen) || step != self->step_) {
                return; // cancelled, or the step finished just before the timer ran
            }
            self->timed_out_ = true;
            error_code ignored;
            self->socket_.close(ignored);
        });
}

void client_link::disarm() {
    ++step_;
    deadline_.cancel();
}

void client_link::close() {
    ++generation_;
    connected_ = false;
    pending_ = nullptr;
    disarm();
    error_code ignored;
    socket_.close(ignored);
}

} // namespace floc::sim::detail
