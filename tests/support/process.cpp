#include "process.hpp"

#include <fcntl.h>
#include <poll.h>
#include <signal.h>
#include <sys/wait.h>
#include <unistd.h>

#include <array>
#include <cerrno>
#include <stdexcept>

namespace floc::test {
namespace {

void close_fd(int& fd) {
    if (fd >= 0) {
        ::close(fd);
        fd = -1;
    }
}

} // namespace

process_result run_process(const std::vector<std::string>& argv, std::chrono::milliseconds limit,
                           const std::string& input) {
    if (argv.empty()) {
        throw std::invalid_argument("run_process: empty argv");
    }
    std::array<int, 2> out_pipe{-1, -1};
    std::array<int, 2> err_pipe{-1, -1};
    std::array<int, 2> in_pipe{-1, -1};
    if (::pipe(out_pipe.data()) != 0 || ::pipe(err_pipe.data()) != 0 || ::pipe(in_pipe.data()) != 0) {
        throw std::runtime_error("run_process: pipe failed");
    }
    std::vector<char*> args;
    args.reserve(argv.size() + 1);
    for (const std::string& a : argv) {
        args.push_back(const_cast<char*>(a.c_str()));  // execv takes char* const[]
    }
    args.push_back(nullptr);

    const pid_t pid = ::fork();
    if (pid < 0) {
        throw std::runtime_error("run_process: fork failed");
    }
    if (pid == 0) {
        ::dup2(in_pipe[0], STDIN_FILENO);
        ::dup2(out_pipe[1], STDOUT_FILENO);
        ::dup2(err_pipe[1], STDERR_FILENO);
        for (int fd : {in_pipe[0], in_pipe[1], out_pipe[0], out_pipe[1], err_pipe[0], err_pipe[1]}) {
            ::close(fd);
        }
        ::execv(args[0], args.data());
        ::_exit(127);
    }
    close_fd(in_pipe[0]);
    close_fd(out_pipe[1]);
    close_fd(err_pipe[1]);
    if (!input.empty()) {
        // Small inputs only; a pipe holds 64 KiB.
        const ssize_t n = ::write(in_pipe[1], input.data(), input.size());
        (void)n;
    }
    close_fd(in_pipe[1]);

    process_result result;
    const auto deadline = std::chrono::steady_clock::now() + limit;
    std::array<char, 4096> buf{};
    while (out_pipe[0] >= 0 || err_pipe[0] >= 0) {
        const auto left = std::chrono::duration_cast<std::chrono::milliseconds>(
            deadline - std::chrono::steady_clock::now());
        if (left.count() <= 0) {
            result.timed_out = true;
            ::kill(pid, SIGKILL);
            break;
        }
        std::array<pollfd, 2> fds{{{out_pipe[0], POLLIN, 0}, {err_pipe[0], POLLIN, 0}}};
        const int ready = ::poll(fds.data(), fds.size(), static_cast<int>(left.count()));
        if (ready < 0 && errno == EINTR) {
            continue;
        }
        for (std::size_t i = 0; i < fds.size(); ++i) {
            if (fds.at(i).fd < 0 || (fds.at(i).revents & (POLLIN | POLLHUP | POLLERR)) == 0) {
                continue;
            }
            const ssize_t n = ::read(fds.at(i).fd, buf.data(), buf.size());
            int& fd = i == 0 ? out_pipe[0] : err_pipe[0];
            if (n <= 0) {
                close_fd(fd);
            } else {
                (i == 0 ? result.out : result.err).append(buf.data(), static_cast<std::size_t>(n));
            }
        }
    }
    close_fd(out_pipe[0]);
    close_fd(err_pipe[0]);
    int status = 0;
    while (::waitpid(pid, &status, 0) < 0 && errno == EINTR) {
    }
    if (WIFEXITED(status)) {
        result.exit_code = WEXITSTATUS(status);
    } else if (WIFSIGNALED(status)) {
        result.exit_code = 128 + WTERMSIG(status);
    }
    return result;
}

int exit_code_of(int status) {
    if (WIFEXITED(status)) {
        return WEXITSTATUS(status);
    }
    if (WIFSIGNALED(status)) {
        return 128 + WTERMSIG(status);
    }
    return -1;
}

background_process::background_process(const std::vector<std::string>& argv,
                                       const std::string& out_path, const std::string& err_path) {
    if (argv.empty()) {
        throw std::invalid_argument("background_process: empty argv");
    }
    std::vector<char*> args;
    for (const std::string& a : argv) {
        args.push_back(const_cast<char*>(a.c_str()));  // execv takes char* const[]
    }
    args.push_back(nullptr);
    const std::string out = out_path.empty() ? "/dev/null" : out_path;
    const std::string err = err_path.empty() ? "/dev/null" : err_path;
    pid_ = ::fork();
    if (pid_ < 0) {
        throw std::runtime_error("background_process: fork failed");
    }
    if (pid_ == 0) {
        const int in_fd = ::open("/dev/null", O_RDONLY);
        const int out_fd = ::open(out.c_str(), O_WRONLY | O_CREAT | O_TRUNC, 0644);
        const int err_fd = ::open(err.c_str(), O_WRONLY | O_CREAT | O_TRUNC, 0644);
        if (in_fd < 0 || out_fd < 0 || err_fd < 0) {
            ::_exit(126);
        }
        ::dup2(in_fd, STDIN_FILENO);
        ::dup2(out_fd, STDOUT_FILENO);
        ::dup2(err_fd, STDERR_FILENO);
        ::execv(args[0], args.data());
        ::_exit(127);
    }
}

background_process::~background_process() {
    if (pid_ > 0 && !exit_code_) {
        stop(std::chrono::seconds{5});
    }
}

void background_process::signal(int sig) const {
    if (pid_ > 0 && !exit_code_) {
        ::kill(pid_, sig);
    }
}

std::optional<int> background_process::wait(std::chrono::milliseconds limit) {
    if (exit_code_) {
        return exit_code_;
    }
    const auto end = std::chrono::steady_clock::now() + limit;
    while (true) {
        int status = 0;
        const pid_t r = ::waitpid(pid_, &status, WNOHANG);
        if (r == pid_) {
            exit_code_ = exit_code_of(status);
            return exit_code_;
        }
        if (r < 0 && errno != EINTR) {
            exit_code_ = -1;
            return exit_code_;
        }
        if (std::chrono::steady_clock::now() >= end) {
            return std::nullopt;
        }
        ::usleep(5000);
    }
}

int background_process::stop(std::chrono::milliseconds grace) {
    signal(SIGTERM);
    if (const auto code = wait(grace)) {
        return *code;
    }
    signal(SIGKILL);
    return wait(std::chrono::seconds{10}).value_or(-1);
}

bool background_process::running() { return !wait(std::chrono::milliseconds{0}).has_value(); }

} // namespace floc::test
