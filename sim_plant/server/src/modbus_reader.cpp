#include "floc/sim/modbus_reader.hpp"

#include "floc/modbus/asio.hpp"
#include "floc/modbus/frame.hpp"
#include "floc/modbus/protocol.hpp"

#include <boost/asio/read.hpp>

#include <algorithm>
#include <array>
#include <span>

namespace floc::sim {

namespace asio = boost::asio;
using tcp = asio::ip::tcp;
using error_code = boost::system::error_code;

struct modbus_reader::impl : std::enable_shared_from_this<impl> {
    impl(asio::io_context& io, reader_options o, std::vector<register_read> reads,
         std::function<void(const read_cycle&)> on_cycle)
        : socket_(io), deadline_(io), pause_(io), options_(std::move(o)), reads_(std::move(reads)),
          on_cycle_(std::move(on_cycle)) {}

    void connect() {
        if (stopped_) {
            return;
        }
        error_code ec;
        const asio::ip::address_v4 address = asio::ip::make_address_v4(options_.address, ec);
        if (ec) {
            fail("\"" + options_.address + "\" is not an IPv4 address");
            return;
        }
        if (socket_.open(tcp::v4(), ec)) {
            fail("cannot open a socket: " + ec.message());
            return;
        }
        arm();
        socket_.async_connect(tcp::endpoint{address, options_.port},
                              [self = shared_from_this(), gen = generation_](const error_code& e) {
                                  if (self->current(gen)) {
                                      self->on_connect(e);
                                  }
                              });
    }

    void on_connect(const error_code& ec) {
        disarm();
        if (ec) {
            fail(timed_out_ ? "no connection within " + millis(options_.timeout) : ec.message());
            return;
        }
        error_code ignored;
        socket_.set_option(tcp::no_delay(true), ignored);
        connected_ = true;
        begin_cycle();
    }

    void begin_cycle() {
        cycle_ = read_cycle{};
        index_ = 0;
        cycle_start_ = std::chrono::steady_clock::now();
        send_next();
    }

    void send_next() {
        if (index_ == reads_.size()) {
            cycle_.ok = true;
            deliver();
            const auto elapsed = std::chrono::steady_clock::now() - cycle_start_;
            const auto wait = std::max<std::chrono::steady_clock::duration>(
                options_.period - elapsed, std::chrono::milliseconds{0});
            schedule(wait, [](impl& self) { self.begin_cycle(); });
            return;
        }
        const register_read& r = reads_[index_];
        const std::array<std::uint8_t, 5> pdu{
            r.function, static_cast<std::uint8_t>(r.address >> 8U),
            static_cast<std::uint8_t>(r.address & 0xFFU), static_cast<std::uint8_t>(r.count >> 8U),
            static_cast<std::uint8_t>(r.count & 0xFFU)};
        ++transaction_;
        const std::size_t n = modbus::encode_frame(transaction_, options_.unit_id, pdu, out_);
        arm();
        asio::async_write(
            socket_, asio::buffer(out_.data(), n),
            [self = shared_from_this(), gen = generation_](const error_code& e, std::size_t) {
                if (self->current(gen)) {
                    self->on_sent(e);
                }
            });
    }

    void on_sent(const error_code& ec) {
        if (ec) {
            fail(io_failure(ec));
            return;
        }
        ++sent_;
        asio::async_read(
            socket_, asio::buffer(in_.data(), modbus::mbap_size),
            [self = shared_from_this(), gen = generation_](const error_code& e, std::size_t) {
                if (self->current(gen)) {
                    self->on_header(e);
                }
            });
    }

    void on_header(const error_code& ec) {
        if (ec) {
            fail(io_failure(ec));
            return;
        }
        const auto length = static_cast<std::uint16_t>((in_[4] << 8U) | in_[5]);
        if (length < modbus::min_mbap_length || length > modbus::max_mbap_length) {
            fail("a reply with an MBAP length of " + std::to_string(length));
            return;
        }
        asio::async_read(socket_, asio::buffer(in_.data() + modbus::mbap_size, length - 1U),
                         [self = shared_from_this(), gen = generation_, length](const error_code& e,
                                                                                std::size_t) {
                             if (self->current(gen)) {
                                 self->on_body(e, length);
                             }
                         });
    }

    void on_body(const error_code& ec, std::uint16_t length) {
        disarm();
        if (ec) {
            fail(io_failure(ec));
            return;
        }
        const register_read& r = reads_[index_];
        const std::string what =
            "function " + std::to_string(r.function) + " at " + std::to_string(r.address);
        const modbus::decoded_frame f = modbus::decode_frame(
            std::span<const std::uint8_t>{in_.data(), modbus::mbap_size - 1U + length});
        if (f.status != modbus::decode_status::complete) {
            fail("a malformed reply to " + what);
            return;
        }
        if (f.header.transaction_id != transaction_) {
            // TCP guide V1.0b §4.4.1.3: a reply that matches no pending request is not taken.
            fail("a reply with transaction id " + std::to_string(f.header.transaction_id) +
                 " to request " + std::to_string(transaction_));
            return;
        }
        const std::uint8_t fc = f.pdu[0];
        if (fc == (r.function | modbus::exception_flag) && f.pdu.size() == 2) {
            const auto code = static_cast<modbus::exception_code>(f.pdu[1]);
            fail("exception " + std::to_string(f.pdu[1]) + " (" +
                 std::string{modbus::to_string(code)} + ") to " + what);
            return;
        }
        if (fc != r.function || f.pdu.size() != 2U + 2U * r.count || f.pdu[1] != 2U * r.count) {
            fail("a reply that does not fit " + what);
            return;
        }
        std::vector<std::uint16_t> words(r.count);
        for (std::size_t i = 0; i < words.size(); ++i) {
            words[i] = static_cast<std::uint16_t>((f.pdu[2 + 2 * i] << 8U) | f.pdu[3 + 2 * i]);
        }
        cycle_.words.push_back(std::move(words));
        ++index_;
        send_next();
    }

    [[nodiscard]] std::string io_failure(const error_code& ec) const {
        if (timed_out_) {
            return "no reply within " + millis(options_.timeout);
        }
        if (ec == asio::error::eof) {
            return "the server closed the connection";
        }
        return ec.message();
    }

    static std::string millis(std::chrono::milliseconds d) {
        return d.count() % 1000 == 0 ? std::to_string(d.count() / 1000) + " s"
                                     : std::to_string(d.count()) + " ms";
    }

    // A timeout for the step under way: when it passes, the socket is closed and the step's
    // handler runs with operation_aborted and timed_out_ set.
    void arm() {
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

    void disarm() {
        ++step_;
        deadline_.cancel();
    }

    void fail(std::string why) {
        close();
        cycle_.ok = false;
        cycle_.error = std::move(why);
        cycle_.words.clear();
        deliver();
        schedule(options_.retry, [](impl& self) { self.connect(); });
    }

    void deliver() {
        if (!stopped_ && on_cycle_) {
            on_cycle_(cycle_);
        }
    }

    template <class F> void schedule(std::chrono::steady_clock::duration after, F next) {
        if (stopped_) {
            return;
        }
        pause_.expires_after(after);
        pause_.async_wait(
            [self = shared_from_this(), gen = generation_, next](const error_code& e) {
                if (!e && self->current(gen)) {
                    next(*self);
                }
            });
    }

    void close() {
        ++generation_; // handlers of the old connection see a stale generation and stop
        connected_ = false;
        disarm();
        error_code ignored;
        socket_.close(ignored);
    }

    void stop() {
        stopped_ = true;
        close();
        pause_.cancel();
    }

    [[nodiscard]] bool current(std::uint64_t gen) const { return !stopped_ && gen == generation_; }

    tcp::socket socket_;
    asio::steady_timer deadline_;
    asio::steady_timer pause_;
    reader_options options_;
    std::vector<register_read> reads_;
    std::function<void(const read_cycle&)> on_cycle_;
    bool stopped_ = false;
    bool connected_ = false;
    bool timed_out_ = false;
    std::uint64_t generation_ = 0;
    std::uint64_t step_ = 0; // counts timed steps, so that a late timer cannot end a finished one
    std::uint16_t transaction_ = 0;
    std::size_t index_ = 0;
    read_cycle cycle_;
    std::chrono::steady_clock::time_point cycle_start_;
    std::array<std::uint8_t, modbus::max_adu_size> out_{};
    std::array<std::uint8_t, modbus::max_adu_size> in_{};
    std::uint64_t sent_ = 0;
};

modbus_reader::modbus_reader(asio::io_context& io, reader_options options,
                             std::vector<register_read> reads,
                             std::function<void(const read_cycle&)> on_cycle)
    : impl_(std::make_shared<impl>(io, std::move(options), std::move(reads), std::move(on_cycle))) {
}

modbus_reader::~modbus_reader() {
    impl_->stop();
}

void modbus_reader::start() {
    impl_->connect();
}

void modbus_reader::stop() {
    impl_->stop();
}

bool modbus_reader::connected() const {
    return impl_->connected_;
}

std::uint64_t modbus_reader::requests_sent() const {
    return impl_->sent_;
}

} // namespace floc::sim
