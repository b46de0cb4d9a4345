// Reads one PLC, read only, on a worker thread of its own (libmodbus blocks), and posts each
// poll cycle's results to the daemon's io_context as an immutable snapshot. An unreachable PLC
// therefore never stalls the rest of the daemon.
//
// The poller can only read: it sends function codes 01, 02, 03 and 04 and nothing else. It never
// enables libmodbus's error recovery (which retries a failed send forever); it reconnects itself
// with exponential back-off and jitter.
#pragma once

#include "floc/config/config.hpp"
#include "floc/plc/read_plan.hpp"

#include <boost/asio/any_io_executor.hpp>

#include <chrono>
#include <condition_variable>
#include <cstdint>
#include <functional>
#include <memory>
#include <mutex>
#include <string>
#include <thread>
#include <vector>

namespace floc::plc {

using steady_time = std::chrono::steady_clock::time_point;

// The outcome of one read request.
struct read_result {
    std::size_t request = 0;          // index into the poller's plan
    steady_time at{};                 // when the reply (or the failure) came
    bool ok = false;
    std::string error;                // when !ok: what went wrong, for logs and the journal
    std::vector<std::uint16_t> words; // registers, for functions 3 and 4
    std::vector<std::uint8_t> bits;   // one byte per bit (0/1), for functions 1 and 2
};

// The connection as the operator should see it.
struct link_status {
    bool connected = false;
    std::string last_error;
    std::uint64_t reads_ok = 0;
    std::uint64_t reads_failed = 0;
    std::uint64_t connects = 0;       // successful connects so far
    steady_time last_ok{};            // last successful read (epoch if none)
    double retry_in_s = 0.0;          // back-off before the next connect attempt
};

// One poll cycle: every request that was due, and the link afterwards.
struct poll_snapshot {
    std::size_t plc = 0;              // index into plant_config::plcs
    std::vector<read_result> results;
    link_status link;
};

class poller {
public:
    using on_snapshot = std::function<void(poll_snapshot)>;

    // `deliver` runs on `executor` (the daemon's io_context), never on the worker thread.
    poller(std::size_t plc_index, config::plc_connection connection, std::vector<read_request> plan,
           boost::asio::any_io_executor executor, on_snapshot deliver);
    ~poller();

    poller(const poller&) = delete;
    poller& operator=(const poller&) = delete;
    poller(poller&&) = delete;
    poller& operator=(poller&&) = delete;

    void start();
    // Stops the worker and waits for it; at most one read's response timeout.
    void stop();

    [[nodiscard]] const std::vector<read_request>& plan() const { return plan_; }

private:
    void run();
    bool sleep_until(steady_time t);  // false when stopped

    std::size_t plc_index_;
    config::plc_connection connection_;
    std::vector<read_request> plan_;
    boost::asio::any_io_executor executor_;
    on_snapshot deliver_;

    std::mutex mutex_;
    std::condition_variable wake_;
    bool stopping_ = false;
    std::thread worker_;
};

// The back-off before connect attempt `failures` (1 = after the first failure): doubling from
// reconnect_min up to reconnect_max, then scaled by `jitter` in [0.8, 1.2]. Pure, for tests.
[[nodiscard]] double backoff_s(const config::plc_connection& c, std::uint32_t failures, double jitter);

} // namespace floc::plc
