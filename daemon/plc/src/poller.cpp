#include "floc/plc/poller.hpp"

#include <boost/asio/post.hpp>
#include <modbus/modbus.h>

#include <algorithm>
#include <cerrno>
#include <cmath>
#include <random>

namespace floc::plc {
namespace {

// libmodbus takes timeouts as seconds + microseconds.
void set_timeout(modbus_t* ctx, double seconds,
                 int (*setter)(modbus_t*, std::uint32_t, std::uint32_t)) {
    const double s = std::max(seconds, 0.001);
    const auto whole = static_cast<std::uint32_t>(s);
    const auto micro = static_cast<std::uint32_t>((s - whole) * 1e6);
    setter(ctx, whole, std::min<std::uint32_t>(micro, 999999));
}

bool is_exception(int err) {
    return err > MODBUS_ENOBASE && err <= MODBUS_ENOBASE + MODBUS_EXCEPTION_GATEWAY_TARGET;
}

std::string describe(int err) {
    if (is_exception(err)) {
        return "exception " + std::to_string(err - MODBUS_ENOBASE) + " (" + modbus_strerror(err) + ")";
    }
    if (err == 0) {
        return "no reply";
    }
    return modbus_strerror(err);
}

struct context_deleter {
    void operator()(modbus_t* ctx) const {
        modbus_close(ctx);
        modbus_free(ctx);
    }
};
using context_ptr = std::unique_ptr<modbus_t, context_deleter>;

} // namespace

double backoff_s(const config::plc_connection& c, std::uint32_t failures, double jitter) {
    const double doubled = c.reconnect_min_s * std::pow(2.0, static_cast<double>(std::max(failures, 1U) - 1U));
    return std::min(doubled, c.reconnect_max_s) * std::clamp(jitter, 0.8, 1.2);
}

poller::poller(std::size_t plc_index, config::plc_connection connection, std::vector<read_request> plan,
               boost::asio::any_io_executor executor, on_snapshot deliver)
    : plc_index_(plc_index), connection_(std::move(connection)), plan_(std::move(plan)),
      executor_(std::move(executor)), deliver_(std::move(deliver)) {}

poller::~poller() { stop(); }

void poller::start() {
    std::lock_guard lock(mutex_);
    if (worker_.joinable()) {
        return;
    }
    stopping_ = false;
    worker_ = std::thread([this] { run(); });
}

void poller::stop() {
    {
        std::lock_guard lock(mutex_);
        stopping_ = true;
    }
    wake_.notify_all();
    if (worker_.joinable()) {
        worker_.join();
    }
}

bool poller::sleep_until(steady_time t) {
    std::unique_lock lock(mutex_);
    wake_.wait_until(lock, t, [this] { return stopping_; });
    return !stopping_;
}

void poller::run() {
    using clock = std::chrono::steady_clock;
    std::minstd_rand jitter_source{std::random_device{}()};
    std::uniform_real_distribution<double> jitter{0.8, 1.2};

    const std::string port = std::to_string(connection_.port);
    context_ptr ctx;
    link_status link;
    std::uint32_t failures = 0;
    steady_time retry_at = clock::now();
    std::vector<steady_time> due(plan_.size(), clock::now());

    const auto post = [this](poll_snapshot snap) {
        boost::asio::post(executor_, [deliver = deliver_, snap = std::move(snap)]() mutable {
            deliver(std::move(snap));
        });
    };
    const auto disconnect = [&](const std::string& why) {
        ctx.reset();
        link.connected = false;
        link.last_error = why;
        ++failures;
        link.retry_in_s = backoff_s(connection_, failures, jitter(jitter_source));
        retry_at = clock::now() + std::chrono::duration_cast<clock::duration>(
                                      std::chrono::duration<double>(link.retry_in_s));
    };

    while (true) {
        {
            std::lock_guard lock(mutex_);
            if (stopping_) {
                break;
            }
        }
        const steady_time now = clock::now();
        poll_snapshot snap;
        snap.plc = plc_index_;

        // Connect when needed and when the back-off allows.
        if (!ctx && now >= retry_at) {
            context_ptr fresh{modbus_new_tcp_pi(connection_.host.c_str(), port.c_str())};
            if (!fresh) {
                disconnect("cannot create a Modbus/TCP context for " + connection_.host);
            } else {
                modbus_set_error_recovery(fresh.get(), MODBUS_ERROR_RECOVERY_NONE);
                modbus_set_slave(fresh.get(), connection_.unit_id);
                // libmodbus bounds connect() by the response timeout.
                set_timeout(fresh.get(), connection_.connect_timeout_s, modbus_set_response_timeout);
                errno = 0;
                if (modbus_connect(fresh.get()) != 0) {
                    const int err = errno;
                    disconnect("connect to " + connection_.host + ":" + port + " failed: " +
                               (err == 0 ? std::string{"timed out"} : std::string{modbus_strerror(err)}));
                } else {
                    set_timeout(fresh.get(), connection_.response_timeout_s, modbus_set_response_timeout);
                    set_timeout(fresh.get(), connection_.byte_timeout_s, modbus_set_byte_timeout);
                    ctx = std::move(fresh);
                    link.connected = true;
                    link.retry_in_s = 0.0;
                    ++link.connects;
                    failures = 0;
                }
            }
        }

        // Read every request that is due (or report it failed while the link is down).
        for (std::size_t i = 0; i < plan_.size(); ++i) {
            if (clock::now() < due[i]) {
                continue;
            }
            const read_request& req = plan_[i];
            const auto period = std::chrono::duration_cast<clock::duration>(
                std::chrono::duration<double>(req.period_s));
            due[i] = std::max(due[i] + period, clock::now());  // no catch-up bursts
            read_result r;
            r.request = i;
            if (!ctx) {
                r.at = clock::now();
                r.error = link.last_error.empty() ? "not connected" : link.last_error;
                ++link.reads_failed;
                snap.results.push_back(std::move(r));
                continue;
            }
            const int n = req.count;
            int got = -1;
            errno = 0;
            switch (req.function) {
            case config::read_function::coils:
                r.bits.resize(req.count);
                got = modbus_read_bits(ctx.get(), req.address, n, r.bits.data());
                break;
            case config::read_function::discrete_inputs:
                r.bits.resize(req.count);
                got = modbus_read_input_bits(ctx.get(), req.address, n, r.bits.data());
                break;
            case config::read_function::holding_registers:
                r.words.resize(req.count);
                got = modbus_read_registers(ctx.get(), req.address, n, r.words.data());
                break;
            case config::read_function::input_registers:
                r.words.resize(req.count);
                got = modbus_read_input_registers(ctx.get(), req.address, n, r.words.data());
                break;
            }
            const int err = errno;
            r.at = clock::now();
            if (got == n) {
                r.ok = true;
                ++link.reads_ok;
                link.last_ok = r.at;
            } else {
                r.words.clear();
                r.bits.clear();
                r.error = describe(got < 0 ? err : 0);
                ++link.reads_failed;
                link.last_error = r.error;
                if (!is_exception(err)) {
                    // A timeout or a garbled reply leaves the stream out of step: start afresh.
                    disconnect(r.error);
                }
            }
            snap.results.push_back(std::move(r));
        }
        if (!snap.results.empty()) {
            snap.link = link;
            post(std::move(snap));
        }

        steady_time next = due.empty() ? clock::now() + std::chrono::hours{1}
                                        : *std::min_element(due.begin(), due.end());
        if (!ctx) {
            next = std::min(next, retry_at);
        }
        if (!sleep_until(next)) {
            break;
        }
    }
}

} // namespace floc::plc
