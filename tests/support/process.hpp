// Test support: run a program as a child process, capture its output, bounded in time.
#pragma once

#include <chrono>
#include <string>
#include <vector>

namespace floc::test {

struct process_result {
    int exit_code = -1;       // exit status, or 128 + signal number
    bool timed_out = false;   // killed after the time limit
    std::string out;          // standard output
    std::string err;          // standard error
};

// Runs argv[0] with arguments argv[1..] and waits at most `limit`; the child is killed (SIGKILL)
// when the limit passes. `input` is written to its standard input.
[[nodiscard]] process_result run_process(const std::vector<std::string>& argv,
                                         std::chrono::milliseconds limit = std::chrono::seconds{30},
                                         const std::string& input = {});

} // namespace floc::test
