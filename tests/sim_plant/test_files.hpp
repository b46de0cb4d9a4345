// Test support of the simulator's process tests: a scratch directory per test process and whole
// files as text.
#pragma once

#include <unistd.h>

#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <string_view>

namespace floc::sim::test {

// A directory of this test process under the system's temporary directory, created.
inline std::filesystem::path temp_dir(std::string_view prefix) {
    const std::filesystem::path d = std::filesystem::temp_directory_path() /
                                    (std::string{prefix} + "-" + std::to_string(::getpid()));
    std::filesystem::create_directories(d);
    return d;
}

// The whole file, or "" when it cannot be read.
inline std::string slurp(const std::filesystem::path& p) {
    std::ifstream in(p);
    std::ostringstream s;
    s << in.rdbuf();
    return s.str();
}

} // namespace floc::sim::test
