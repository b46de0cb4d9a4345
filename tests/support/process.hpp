// Test support: run a program as a child process, capture its output, bounded in time.
#pragma once

#include <chrono>
#include <optional>
#include <string>
#include <vector>

namespace floc::test {

struct process_result {
    int exit_code = -1;       // exit status, or 128 + signal number
    bool timed_out = false;   // killed after the time limit
    std::string out;          // standard output
    std::string err;          // standard error
};

// The exit code a waitpid() status stands for: the exit status, or 128 + the signal number.
[[nodiscard]] int exit_code_of(int wait_status);

// Runs argv[0] with arguments argv[1..] and waits at most `limit`; the child is killed (SIGKILL)
// when the limit passes. `input` is written to its standard input.
[[nodiscard]] process_result run_process(const std::vector<std::string>& argv,
                                         std::chrono::milliseconds limit = std::chrono::seconds{30},
                                         const std::string& input = {});

// A program running in the background for the length of a test: started with its output going
// to files, stopped by PID (SIGTERM, then SIGKILL after a grace period) in the destructor.
class background_process {
public:
    // `out_path` / `err_path` receive standard output and error ("" = /dev/null).
    background_process(const std::vector<std::string>& argv, const std::string& out_path = {},
                       const std::string& err_path = {});
    ~background_process();

    background_process(const background_process&) = delete;
    background_process& operator=(const background_process&) = delete;
    background_process(background_process&&) = delete;
    background_process& operator=(background_process&&) = delete;

    [[nodiscard]] int pid() const { return pid_; }
    // Sends a signal (no-op once the process was reaped).
    void signal(int sig) const;
    // Waits at most `limit` for the process to end; its exit code (128 + signal) or nothing.
    std::optional<int> wait(std::chrono::milliseconds limit);
    // SIGTERM, wait `grace`, then SIGKILL; returns the exit code.
    int stop(std::chrono::milliseconds grace = std::chrono::seconds{5});
    [[nodiscard]] bool running();

private:
    int pid_ = -1;
    std::optional<int> exit_code_;
};

} // namespace floc::test
