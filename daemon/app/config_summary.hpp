// The short human summary `flocd --check-config` prints for a valid config.
#pragma once

#include "floc/config/config.hpp"

#include <string>

namespace floc::app {

[[nodiscard]] std::string config_summary(const config::plant_config& cfg);

} // namespace floc::app
