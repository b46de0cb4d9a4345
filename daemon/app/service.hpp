// flocd's service: one io_context owns everything. PLC pollers (a worker thread each) post
// snapshots here; readings are conditioned, the advisors run on plant time, the register image
// is rewritten for the HMI server, advice changes go to the journal, state is saved atomically.
// SIGTERM/SIGINT stop it gracefully (state flushed); SIGHUP reloads the config, keeping the old
// one when the new one is invalid.
#pragma once

#include "floc/config/config.hpp"
#include "floc/modbus/server.hpp"

#include <boost/asio/io_context.hpp>
#include <boost/asio/signal_set.hpp>
#include <boost/asio/steady_timer.hpp>

#include <chrono>
#include <functional>
#include <memory>
#include <string>

namespace spdlog {
class logger;
}

namespace floc::app {

struct service_options {
    std::string config_path;
    bool once = false;                                   // one poll-advise-publish cycle, then stop
    std::chrono::milliseconds once_limit{15000};         // give up waiting for the PLCs after this
    std::chrono::milliseconds state_save_period{60000};  // how often state is written while running
};

class runtime;    // everything built from one config
class hmi_space;  // the register space the HMI server answers from

class service {
public:
    service(boost::asio::io_context& io, config::plant_config cfg, std::shared_ptr<spdlog::logger> log,
            service_options options);
    ~service();

    service(const service&) = delete;
    service& operator=(const service&) = delete;
    service(service&&) = delete;
    service& operator=(service&&) = delete;

    // Starts pollers, timers, the HMI server and the signal handlers. Returns an exit code
    // (sysexits) when something could not start, 0 when running.
    int start();
    // Graceful stop: pollers stopped, state and journal flushed, server closed; io.run() then
    // returns because no work is left.
    void stop();

    // With --once: the text printed after the cycle.
    [[nodiscard]] const std::string& once_report() const { return once_report_; }
    [[nodiscard]] int exit_code() const { return exit_code_; }
    // The HMI server's bound port (useful with port 0 in tests).
    [[nodiscard]] std::uint16_t hmi_port() const;

private:
    void wait_for_signals();
    void wait_for_reload();
    void schedule_tick();
    void on_tick();
    void reload();
    void finish_once();
    int start_server();

    boost::asio::io_context& io_;
    std::shared_ptr<spdlog::logger> log_;
    service_options options_;
    boost::asio::signal_set stop_signals_;
    boost::asio::signal_set reload_signal_;
    boost::asio::steady_timer tick_;
    std::chrono::steady_clock::time_point started_;
    std::chrono::steady_clock::time_point last_save_;
    std::unique_ptr<runtime> rt_;
    std::unique_ptr<hmi_space> space_;
    std::unique_ptr<modbus::server> server_;
    std::string once_report_;
    int exit_code_ = 0;
    bool stopping_ = false;
    std::uint16_t heartbeat_ = 0;
    std::uint16_t generation_ = 0;
};

} // namespace floc::app
