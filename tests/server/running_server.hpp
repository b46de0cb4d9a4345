// Test support: a floc::modbus::server on 127.0.0.1, port 0, run by its own io_context thread.
// Everything that touches the server goes through on_io(), which runs on that thread.
#pragma once

#include "floc/modbus/asio.hpp"
#include "floc/modbus/server.hpp"

#include <gtest/gtest.h>

#include <chrono>
#include <future>
#include <mutex>
#include <thread>
#include <vector>

namespace floc::modbus::test {

class running_server {
public:
    running_server(register_space& space, server_options options) {
        options.address = "127.0.0.1";
        options.port = 0;
        auto user = std::move(options.on_event);
        options.on_event = [this, user](const server_event& e) {
            if (user) {
                user(e);
            }
            const std::lock_guard lock{events_mutex_};
            events_.push_back(e);
        };
        server_ = std::make_unique<server>(io_, space, std::move(options));
        start_error_ = server_->start();
        if (!start_error_) {
            thread_ = std::thread{[this] { io_.run(); }};
        }
    }

    ~running_server() { stop(); }
    running_server(const running_server&) = delete;
    running_server& operator=(const running_server&) = delete;

    [[nodiscard]] const std::optional<std::string>& start_error() const { return start_error_; }
    [[nodiscard]] std::uint16_t port() const { return server_->port(); }

    // Runs `f(server&)` on the io_context thread and returns its result (bounded wait).
    template <class F> auto on_io(F f) -> decltype(f(std::declval<server&>())) {
        using result = decltype(f(std::declval<server&>()));
        if (!thread_.joinable()) {
            return f(*server_); // the io_context is not running: this thread may touch it
        }
        std::packaged_task<result()> task{[&] { return f(*server_); }};
        auto done = task.get_future();
        boost::asio::post(io_, [&task] { task(); });
        if (done.wait_for(std::chrono::seconds{10}) != std::future_status::ready) {
            ADD_FAILURE() << "the server's io_context did not run a posted task within 10 s";
            std::abort(); // the task refers to this frame: do not return from it
        }
        return done.get();
    }

    // Replaces the server's fault rules.
    void set_faults(std::vector<fault_rule> rules) {
        on_io([&rules](server& s) {
            s.set_faults(std::move(rules));
            return 0;
        });
    }
    [[nodiscard]] server_statistics statistics() {
        return on_io([](server& s) { return s.statistics(); });
    }
    [[nodiscard]] std::size_t connections() {
        return on_io([](server& s) { return s.connections(); });
    }
    [[nodiscard]] std::vector<server_event> events() {
        const std::lock_guard lock{events_mutex_};
        return events_;
    }

    // Polls `condition` (run on the io thread) until it holds, at most `limit`.
    template <class F>
    bool eventually(F condition, std::chrono::milliseconds limit = std::chrono::seconds{5}) {
        const auto deadline = std::chrono::steady_clock::now() + limit;
        while (std::chrono::steady_clock::now() < deadline) {
            if (on_io(condition)) {
                return true;
            }
            std::this_thread::sleep_for(std::chrono::milliseconds{5});
        }
        return on_io(condition);
    }

    // Stops the server on its thread; the io_context then runs out of work and the thread ends.
    void stop() {
        if (thread_.joinable()) {
            on_io([](server& s) {
                s.stop();
                return 0;
            });
            thread_.join();
        }
    }

private:
    boost::asio::io_context io_;
    std::unique_ptr<server> server_;
    std::optional<std::string> start_error_;
    std::thread thread_;
    std::mutex events_mutex_;
    std::vector<server_event> events_;
};

} // namespace floc::modbus::test
