// flocd's log: spdlog with one sink chosen by [storage] log: the console (standard error), a
// rotating file, or journald (standard error with the syslog priority prefix "<N>" that
// systemd's journal reads, so no libsystemd is needed).
#pragma once

#include "floc/config/config.hpp"

#include <memory>
#include <string>

namespace spdlog {
class logger;
}

namespace floc::app {

// Builds the logger; on a file that cannot be opened it falls back to the console and says so
// in `warning`.
[[nodiscard]] std::shared_ptr<spdlog::logger> make_logger(const config::storage_config& storage,
                                                          std::string& warning);

} // namespace floc::app
