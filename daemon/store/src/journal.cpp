#include "floc/store/journal.hpp"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>

namespace floc::store {

journal::journal(std::filesystem::path path, std::uint64_t max_bytes, unsigned keep)
    : path_(std::move(path)), max_bytes_(max_bytes), keep_(keep) {}

journal::~journal() {
    if (fd_ >= 0) {
        ::close(fd_);
    }
}

std::error_code journal::open() {
    fd_ = ::open(path_.c_str(), O_WRONLY | O_CREAT | O_APPEND | O_CLOEXEC, 0640);
    if (fd_ < 0) {
        return {errno, std::generic_category()};
    }
    struct stat st {};
    size_ = ::fstat(fd_, &st) == 0 ? static_cast<std::uint64_t>(st.st_size) : 0U;
    return {};
}

std::error_code journal::rotate() {
    ::close(fd_);
    fd_ = -1;
    std::error_code ec;
    const auto numbered = [&](unsigned n) {
        return std::filesystem::path{path_.string() + "." + std::to_string(n)};
    };
    std::filesystem::remove(numbered(keep_), ec);
    for (unsigned n = keep_; n > 1; --n) {
        std::filesystem::rename(numbered(n - 1), numbered(n), ec);  // missing ones are fine
    }
    std::filesystem::rename(path_, numbered(1), ec);
    return open();
}

std::error_code journal::append(const json_object& line) {
    if (fd_ < 0) {
        if (const std::error_code ec = open()) {
            return ec;
        }
    }
    const std::string text = line.str() + "\n";
    if (size_ > 0 && size_ + text.size() > max_bytes_ && keep_ > 0) {
        if (const std::error_code ec = rotate()) {
            return ec;
        }
    }
    std::string_view rest = text;
    while (!rest.empty()) {
        const ssize_t n = ::write(fd_, rest.data(), rest.size());
        if (n < 0) {
            if (errno == EINTR) {
                continue;
            }
            return {errno, std::generic_category()};
        }
        rest.remove_prefix(static_cast<std::size_t>(n));
        size_ += static_cast<std::uint64_t>(n);
    }
    if (::fdatasync(fd_) != 0) {
        return {errno, std::generic_category()};
    }
    return {};
}

} // namespace floc::store
