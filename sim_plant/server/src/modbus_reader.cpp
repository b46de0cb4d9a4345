#include "floc/sim/modbus_reader.hpp"

#include "client_link.hpp"

#include "floc/modbus/protocol.hpp"

#include <algorithm>

namespace floc::sim {

namespace asio = boost::asio;
using error_code = boost::system::error_code;

struct modbus_reader::impl : std::enable_shared_from_this<impl> {
    impl(asio::io_context& io, reader_options o, std::vector<register_read> reads,
         std::function<void(const read_cycle&)> on_cycle)
        : link_(std::make_shared<detail::client_link>(
              io, detail::link_options{o.address, o.port, o.unit_id, o.timeout})),
          pause_(io), options_(std::move(o)), reads_(std::move(reads)),
          on_cycle_(std::move(on_cycle)) {}

    void connect() {
        if (stopped_) {
            return;
        }
        link_->connect([self = shared_from_this()](const std::string& error) {
            if (!error.empty()) {
                self->fail(error);
                return;
            }
            self->begin_cycle();
        });
    }

    void begin_cycle() {
        cycle_ = read_cycle{};
        index_ = 0;
        cycle_start_ = std::chrono::steady_clock::now();
        send_next();
    }

    // Only the reads of the list: function 03 or 04, an address and a count.
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
        link_->request(detail::read_pdu(r.function, r.address, r.count), what(r),
                       [self = shared_from_this()](const std::string& error,
                                                   std::span<const std::uint8_t> reply) {
                           self->on_reply(error, reply);
                       });
    }

    void on_reply(const std::string& error, std::span<const std::uint8_t> pdu) {
        if (!error.empty()) {
            fail(error);
            return;
        }
        const register_read& r = reads_[index_];
        if (const std::uint8_t code = detail::exception_in(pdu, r.function); code != 0) {
            fail("exception " + std::to_string(code) + " (" +
                 std::string{modbus::to_string(static_cast<modbus::exception_code>(code))} +
                 ") to " + what(r));
            return;
        }
        std::optional<std::vector<std::uint16_t>> words =
            detail::read_reply_words(pdu, r.function, r.count);
        if (!words) {
            fail("a reply that does not fit " + what(r));
            return;
        }
        cycle_.words.push_back(std::move(*words));
        ++index_;
        send_next();
    }

    static std::string what(const register_read& r) {
        return "function " + std::to_string(r.function) + " at " + std::to_string(r.address);
    }

    void fail(std::string why) {
        link_->close();
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
        pause_.async_wait([self = shared_from_this(), next](const error_code& e) {
            if (!e && !self->stopped_) {
                next(*self);
            }
        });
    }

    void stop() {
        stopped_ = true;
        link_->close();
        pause_.cancel();
    }

    std::shared_ptr<detail::client_link> link_;
    asio::steady_timer pause_;
    reader_options options_;
    std::vector<register_read> reads_;
    std::function<void(const read_cycle&)> on_cycle_;
    bool stopped_ = false;
    std::size_t index_ = 0;
    read_cycle cycle_;
    std::chrono::steady_clock::time_point cycle_start_;
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
    return impl_->link_->connected();
}

std::uint64_t modbus_reader::requests_sent() const {
    return impl_->link_->requests_sent();
}

} // namespace floc::sim
