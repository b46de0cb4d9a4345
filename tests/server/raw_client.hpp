// Test support: a blocking TCP client on loopback with bounded waits, for sending exact bytes
// (split, pipelined, malformed) to a Modbus/TCP server and reading its frames back.
#pragma once

#include <arpa/inet.h>
#include <netinet/in.h>
#include <netinet/tcp.h>
#include <poll.h>
#include <sys/socket.h>
#include <unistd.h>

#include <cerrno>
#include <chrono>
#include <cstdint>
#include <optional>
#include <span>
#include <string>
#include <vector>

namespace floc::modbus::test {

class raw_client {
public:
    // Connects to 127.0.0.1:`port`, from `source` (another 127.x.y.z address) when given.
    explicit raw_client(std::uint16_t port, const char* source = nullptr) {
        fd_ = ::socket(AF_INET, SOCK_STREAM, 0);
        if (fd_ < 0) {
            return;
        }
        const int one = 1;
        ::setsockopt(fd_, IPPROTO_TCP, TCP_NODELAY, &one, sizeof one);
        if (source != nullptr) {
            sockaddr_in from{};
            from.sin_family = AF_INET;
            ::inet_pton(AF_INET, source, &from.sin_addr);
            if (::bind(fd_, reinterpret_cast<const sockaddr*>(&from), sizeof from) != 0) {
                close();
                return;
            }
        }
        sockaddr_in to{};
        to.sin_family = AF_INET;
        to.sin_port = htons(port);
        to.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
        if (::connect(fd_, reinterpret_cast<const sockaddr*>(&to), sizeof to) != 0) {
            close();
        }
    }
    ~raw_client() { close(); }
    raw_client(const raw_client&) = delete;
    raw_client& operator=(const raw_client&) = delete;

    [[nodiscard]] bool connected() const { return fd_ >= 0; }

    bool send(std::span<const std::uint8_t> data) {
        std::size_t sent = 0;
        while (fd_ >= 0 && sent < data.size()) {
            const ssize_t n = ::send(fd_, data.data() + sent, data.size() - sent, MSG_NOSIGNAL);
            if (n < 0 && errno == EINTR) {
                continue;
            }
            if (n <= 0) {
                return false;
            }
            sent += static_cast<std::size_t>(n);
        }
        return fd_ >= 0;
    }

    // Exactly `n` bytes, or nothing if the connection closes or `limit` passes first.
    std::optional<std::vector<std::uint8_t>> receive(std::size_t n,
                                                     std::chrono::milliseconds limit) {
        std::vector<std::uint8_t> out;
        const auto deadline = std::chrono::steady_clock::now() + limit;
        while (out.size() < n) {
            if (!wait_readable(deadline)) {
                return std::nullopt;
            }
            std::uint8_t buf[512];
            const std::size_t want = std::min(sizeof buf, n - out.size());
            const ssize_t got = ::recv(fd_, buf, want, 0);
            if (got < 0 && errno == EINTR) {
                continue;
            }
            if (got <= 0) {
                return std::nullopt;
            }
            out.insert(out.end(), buf, buf + got);
        }
        return out;
    }

    // One whole Modbus/TCP frame (MBAP header, then `length - 1` more bytes), or nothing.
    std::optional<std::vector<std::uint8_t>>
    frame(std::chrono::milliseconds limit = std::chrono::seconds{5}) {
        auto head = receive(6, limit);
        if (!head) {
            return std::nullopt;
        }
        const std::size_t length = static_cast<std::size_t>(((*head)[4] << 8U) | (*head)[5]);
        auto rest = receive(length, limit);
        if (!rest) {
            return std::nullopt;
        }
        head->insert(head->end(), rest->begin(), rest->end());
        return head;
    }

    // True when the server closes the connection (EOF or reset) within `limit`; bytes that
    // arrive first are skipped.
    bool closed_by_peer(std::chrono::milliseconds limit = std::chrono::seconds{5}) {
        const auto deadline = std::chrono::steady_clock::now() + limit;
        while (wait_readable(deadline)) {
            std::uint8_t buf[512];
            const ssize_t got = ::recv(fd_, buf, sizeof buf, 0);
            if (got == 0 || (got < 0 && errno != EINTR)) {
                return true;
            }
        }
        return false;
    }

    // Half-close: no more requests, replies may still come.
    void finish_sending() {
        if (fd_ >= 0) {
            ::shutdown(fd_, SHUT_WR);
        }
    }

    // Resets the connection (RST instead of FIN), as a client that crashes.
    void abort() {
        if (fd_ >= 0) {
            const linger hard{1, 0};
            ::setsockopt(fd_, SOL_SOCKET, SO_LINGER, &hard, sizeof hard);
            close();
        }
    }

    void close() {
        if (fd_ >= 0) {
            ::close(fd_);
            fd_ = -1;
        }
    }

private:
    bool wait_readable(std::chrono::steady_clock::time_point deadline) {
        while (fd_ >= 0) {
            const auto left = std::chrono::duration_cast<std::chrono::milliseconds>(
                deadline - std::chrono::steady_clock::now());
            if (left.count() <= 0) {
                return false;
            }
            pollfd p{fd_, POLLIN, 0};
            const int r = ::poll(&p, 1, static_cast<int>(left.count()));
            if (r > 0) {
                return true;
            }
            if (r < 0 && errno != EINTR) {
                return false;
            }
        }
        return false;
    }

    int fd_ = -1;
};

} // namespace floc::modbus::test
