#include "floc/store/files.hpp"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <fstream>
#include <sstream>

namespace floc::store {
namespace {

std::error_code last_error() { return {errno, std::generic_category()}; }

class fd_guard {
public:
    explicit fd_guard(int fd) : fd_(fd) {}
    ~fd_guard() {
        if (fd_ >= 0) {
            ::close(fd_);
        }
    }
    fd_guard(const fd_guard&) = delete;
    fd_guard& operator=(const fd_guard&) = delete;
    fd_guard(fd_guard&&) = delete;
    fd_guard& operator=(fd_guard&&) = delete;
    [[nodiscard]] int get() const { return fd_; }
    int release() {
        const int fd = fd_;
        fd_ = -1;
        return fd;
    }

private:
    int fd_;
};

std::error_code write_all(int fd, std::string_view content) {
    while (!content.empty()) {
        const ssize_t n = ::write(fd, content.data(), content.size());
        if (n < 0) {
            if (errno == EINTR) {
                continue;
            }
            return last_error();
        }
        content.remove_prefix(static_cast<std::size_t>(n));
    }
    return {};
}

} // namespace

std::error_code atomic_write(const std::filesystem::path& path, std::string_view content) {
    const std::filesystem::path dir = path.has_parent_path() ? path.parent_path() : ".";
    const std::filesystem::path temp =
        dir / ("." + path.filename().string() + ".tmp." + std::to_string(::getpid()));
    fd_guard fd{::open(temp.c_str(), O_WRONLY | O_CREAT | O_TRUNC | O_CLOEXEC, 0640)};
    if (fd.get() < 0) {
        return last_error();
    }
    if (const std::error_code ec = write_all(fd.get(), content)) {
        ::unlink(temp.c_str());
        return ec;
    }
    if (::fsync(fd.get()) != 0) {
        const std::error_code ec = last_error();
        ::unlink(temp.c_str());
        return ec;
    }
    if (::close(fd.release()) != 0) {
        const std::error_code ec = last_error();
        ::unlink(temp.c_str());
        return ec;
    }
    if (::rename(temp.c_str(), path.c_str()) != 0) {
        const std::error_code ec = last_error();
        ::unlink(temp.c_str());
        return ec;
    }
    // The rename itself must reach the disk: sync the directory entry.
    const fd_guard dir_fd{::open(dir.c_str(), O_RDONLY | O_DIRECTORY | O_CLOEXEC)};
    if (dir_fd.get() >= 0) {
        (void)::fsync(dir_fd.get());
    }
    return {};
}

std::optional<std::string> read_whole(const std::filesystem::path& path, std::error_code& error) {
    std::ifstream in(path, std::ios::binary);
    if (!in) {
        error = std::error_code{errno != 0 ? errno : ENOENT, std::generic_category()};
        return std::nullopt;
    }
    std::ostringstream s;
    s << in.rdbuf();
    if (in.bad()) {
        error = std::make_error_code(std::errc::io_error);
        return std::nullopt;
    }
    error = {};
    return s.str();
}

std::error_code ensure_directory(const std::filesystem::path& dir) {
    std::error_code ec;
    std::filesystem::create_directories(dir, ec);
    return ec;
}

} // namespace floc::store
