// `flocd calc ADVISOR key=value ...`: runs one advisor (or one of its formulas) on inputs given
// on the command line and prints the advice, its explanation and the intermediate figures, in
// SI or US customary units. For what-if work and for checking floc by hand.
#pragma once

#include <iosfwd>
#include <span>
#include <string_view>

namespace floc::app {

// `args` are the words after "calc". Returns the process exit code (exit_codes.hpp): 0, 64 for
// a bad command line (unknown advisor or key, missing key), 65 for a bad value.
[[nodiscard]] int run_calc(std::span<const std::string_view> args, std::ostream& out,
                           std::ostream& err);

} // namespace floc::app
