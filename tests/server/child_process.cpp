#include "child_process.hpp"
#include "process.hpp"

#include <fcntl.h>
#include <poll.h>
#include <signal.h>
#include <sys/wait.h>
#include <unistd.h>

#include <array>
#include <cerrno>
#include <thread>

namespace floc::modbus::test {

namespace {

void close_fd(int& fd) {
    if (fd >= 0) {
        ::close(fd);
        fd = -1;
    }
}

} // namespace

child_process::child_process(const std::vector<std::string>& argv) {
    if (argv.empty()) {
        return;
    }
    std::array<int, 2> in{-1, -1};
    std::array<int, 2> out{-1, -1};
    std::array<int, 2> err{-1, -1};
    if (::pipe2(in.data(), O_CLOEXEC) != 0 || ::pipe2(out.data(), O_CLOEXEC) != 0 ||
        ::pipe2(err.data(), O_CLOEXEC) != 0) {
        for (int fd : {in[0], in[1], out[0], out[1], err[0], err[1]}) {
            close_fd(fd);
        }
        return;
    }
    std::vector<char*> args;
    args.reserve(argv.size() + 1);
    for (const std::string& a : argv) {
        args.push_back(const_cast<char*>(a.c_str())); // execv takes char* const[]
    }
    args.push_back(nullptr);
    pid_ = ::fork();
    if (pid_ == 0) {
        ::dup2(in[0], STDIN_FILENO);
        ::dup2(out[1], STDOUT_FILENO);
        ::dup2(err[1], STDERR_FILENO);
        ::execv(args[0], args.data());
        ::_exit(127);
    }
    ::close(in[0]);
    ::close(out[1]);
    ::close(err[1]);
    in_ = in[1];
    out_fd_ = out[0];
    err_fd_ = err[0];
    if (pid_ < 0) {
        close_fd(in_);
        close_fd(out_fd_);
        close_fd(err_fd_);
    }
}

child_process::~child_process() {
    if (pid_ > 0 && !exit_code_) {
        close_input();
        send_signal(SIGTERM);
        (void)wait(std::chrono::seconds{5}); // kills the child when it does not end in time
    }
    close_fd(in_);
    close_fd(out_fd_);
    close_fd(err_fd_);
}

bool child_process::pump(std::chrono::milliseconds limit) {
    std::array<pollfd, 2> fds{{{out_fd_, POLLIN, 0}, {err_fd_, POLLIN, 0}}};
    if (out_fd_ < 0 && err_fd_ < 0) {
        return false;
    }
    const int ready = ::poll(fds.data(), fds.size(), static_cast<int>(limit.count()));
    if (ready <= 0) {
        return true;
    }
    std::array<char, 4096> buf{};
    for (std::size_t i = 0; i < fds.size(); ++i) {
        if (fds.at(i).fd < 0 || (fds.at(i).revents & (POLLIN | POLLHUP | POLLERR)) == 0) {
            continue;
        }
        int& fd = i == 0 ? out_fd_ : err_fd_;
        const ssize_t n = ::read(fd, buf.data(), buf.size());
        if (n > 0) {
            (i == 0 ? out_ : err_).append(buf.data(), static_cast<std::size_t>(n));
        } else if (n == 0 || errno != EINTR) {
            close_fd(fd);
        }
    }
    return out_fd_ >= 0 || err_fd_ >= 0;
}

std::optional<std::string> child_process::wait_for_line(const std::string& text,
                                                        std::chrono::milliseconds limit,
                                                        bool from_stderr) {
    const auto deadline = std::chrono::steady_clock::now() + limit;
    while (true) {
        const std::string& buffer = from_stderr ? err_ : out_;
        std::size_t& seen = from_stderr ? err_seen_ : out_seen_;
        for (std::size_t eol = buffer.find('\n', seen); eol != std::string::npos;
             eol = buffer.find('\n', seen)) {
            std::string line = buffer.substr(seen, eol - seen);
            seen = eol + 1;
            if (line.find(text) != std::string::npos) {
                return line;
            }
        }
        const auto left = std::chrono::duration_cast<std::chrono::milliseconds>(
            deadline - std::chrono::steady_clock::now());
        if (left.count() <= 0 || (from_stderr ? err_fd_ : out_fd_) < 0) {
            return std::nullopt;
        }
        pump(left);
    }
}

void child_process::close_input() {
    close_fd(in_);
}

void child_process::send_signal(int signal) {
    if (pid_ > 0 && !exit_code_) {
        ::kill(pid_, signal);
    }
}

std::optional<int> child_process::wait(std::chrono::milliseconds limit) {
    if (pid_ <= 0) {
        return std::nullopt;
    }
    const auto deadline = std::chrono::steady_clock::now() + limit;
    while (!exit_code_) {
        pump(std::chrono::milliseconds{10});
        int status = 0;
        const pid_t r = ::waitpid(pid_, &status, WNOHANG);
        if (r == pid_) {
            exit_code_ = floc::test::exit_code_of(status);
            break;
        }
        if (std::chrono::steady_clock::now() >= deadline) {
            ::kill(pid_, SIGKILL);
            ::waitpid(pid_, &status, 0);
            exit_code_ = floc::test::exit_code_of(status);
            return std::nullopt;
        }
    }
    // Collect what is left in the pipes (bounded: the writer is gone).
    for (int i = 0; i < 100 && pump(std::chrono::milliseconds{10}); ++i) {
    }
    return exit_code_;
}

} // namespace floc::modbus::test
