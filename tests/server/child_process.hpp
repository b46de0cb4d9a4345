// Test support: a program started in the background (a server, a packet capture) whose output
// is read while it runs. Every wait is bounded; the destructor ends the child (SIGTERM, then
// SIGKILL after 5 s) so that a failing test never leaves it behind.
#pragma once

#include <chrono>
#include <optional>
#include <string>
#include <vector>

#include <sys/types.h>

namespace floc::modbus::test {

class child_process {
public:
    // Starts argv[0] with arguments argv[1..]; its stdin, stdout and stderr are pipes.
    explicit child_process(const std::vector<std::string>& argv);
    ~child_process();
    child_process(const child_process&) = delete;
    child_process& operator=(const child_process&) = delete;

    [[nodiscard]] bool started() const { return pid_ > 0; }

    // Reads stdout (or stderr) until a line containing `text` arrives; returns that line, or
    // nothing when the child closes the stream or `limit` passes.
    std::optional<std::string> wait_for_line(const std::string& text,
                                             std::chrono::milliseconds limit,
                                             bool from_stderr = false);

    // Closes the child's standard input.
    void close_input();
    // Sends `signal` to the child.
    void send_signal(int signal);
    // Waits for the child to exit; returns its exit code (128 + signal if killed), or nothing
    // when `limit` passes (the child is then killed).
    std::optional<int> wait(std::chrono::milliseconds limit);

    // Everything read from stdout and stderr so far (after wait(): everything).
    [[nodiscard]] const std::string& out() const { return out_; }
    [[nodiscard]] const std::string& err() const { return err_; }

private:
    // Reads what is available from both pipes, waiting at most `limit`; false at end of both.
    bool pump(std::chrono::milliseconds limit);

    pid_t pid_ = -1;
    int in_ = -1;
    int out_fd_ = -1;
    int err_fd_ = -1;
    std::string out_;
    std::string err_;
    std::size_t out_seen_ = 0; // wait_for_line's scan positions
    std::size_t err_seen_ = 0;
    std::optional<int> exit_code_;
};

} // namespace floc::modbus::test
