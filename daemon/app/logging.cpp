#include "logging.hpp"

#include <spdlog/logger.h>
#include <spdlog/sinks/base_sink.h>
#include <spdlog/sinks/rotating_file_sink.h>
#include <spdlog/sinks/stdout_sinks.h>
#include <spdlog/spdlog.h>

#include <cstdio>
#include <mutex>

namespace floc::app {
namespace {

// Standard error with "<priority>" prefixes (sd-daemon(3) convention) for the journal.
class journal_prefix_sink final : public spdlog::sinks::base_sink<std::mutex> {
protected:
    void sink_it_(const spdlog::details::log_msg& msg) override {
        int priority = 6;  // info
        switch (msg.level) {
        case spdlog::level::trace:
        case spdlog::level::debug: priority = 7; break;
        case spdlog::level::info: priority = 6; break;
        case spdlog::level::warn: priority = 4; break;
        case spdlog::level::err: priority = 3; break;
        case spdlog::level::critical: priority = 2; break;
        case spdlog::level::off:
        case spdlog::level::n_levels: break;
        }
        spdlog::memory_buf_t formatted;
        formatter_->format(msg, formatted);
        std::fprintf(stderr, "<%d>%.*s", priority, static_cast<int>(formatted.size()), formatted.data());
    }
    void flush_() override { std::fflush(stderr); }
};

} // namespace

std::shared_ptr<spdlog::logger> make_logger(const config::storage_config& storage, std::string& warning) {
    std::shared_ptr<spdlog::sinks::sink> sink;
    std::string pattern = "%Y-%m-%d %H:%M:%S.%e %^%l%$ %v";
    switch (storage.log) {
    case config::log_sink::file:
        try {
            sink = std::make_shared<spdlog::sinks::rotating_file_sink_mt>(storage.log_file, 16U << 20U, 5);
        } catch (const spdlog::spdlog_ex& e) {
            warning = "cannot open log file " + storage.log_file + " (" + e.what() + "); logging to the console";
        }
        break;
    case config::log_sink::journald:
        sink = std::make_shared<journal_prefix_sink>();
        pattern = "%l %v";  // the journal adds its own time stamps
        break;
    case config::log_sink::console:
        break;
    }
    if (!sink) {
        sink = std::make_shared<spdlog::sinks::stderr_sink_mt>();
    }
    auto logger = std::make_shared<spdlog::logger>("flocd", sink);
    logger->set_pattern(pattern);
    logger->set_level(spdlog::level::from_str(storage.log_level));
    logger->flush_on(spdlog::level::info);
    return logger;
}

} // namespace floc::app
