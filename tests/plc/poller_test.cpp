// The PLC poller against a PLC played by libmodbus's own server (an independent peer), on
// loopback: values arrive decoded, a PLC that is down at start is reached later, exception
// replies keep the connection, and the PLC never receives a write function code.
#include "floc/plc/decode.hpp"
#include "floc/plc/poller.hpp"

#include <boost/asio/io_context.hpp>
#include <gtest/gtest.h>
#include <modbus/modbus.h>

#include <arpa/inet.h>
#include <netinet/in.h>
#include <sys/select.h>
#include <sys/socket.h>
#include <unistd.h>

#include <atomic>
#include <bit>
#include <mutex>
#include <set>
#include <thread>

namespace {

using namespace floc;
using namespace std::chrono_literals;

// A Modbus/TCP PLC stand-in on 127.0.0.1, served by libmodbus on a thread of its own.
class fake_plc {
public:
    explicit fake_plc(std::uint16_t port = 0) {
        map_ = modbus_mapping_new(16, 16, 200, 60);
        ctx_ = modbus_new_tcp("127.0.0.1", port);
        listen_fd_ = modbus_tcp_listen(ctx_, 4);
        if (listen_fd_ < 0) {
            throw std::runtime_error("fake PLC cannot listen");
        }
        sockaddr_in a{};
        socklen_t len = sizeof a;
        getsockname(listen_fd_, reinterpret_cast<sockaddr*>(&a), &len);
        port_ = ntohs(a.sin_port);
        thread_ = std::thread([this] { serve(); });
    }
    ~fake_plc() {
        stop_ = true;
        thread_.join();
        for (const int fd : clients_) {
            close(fd);
        }
        close(listen_fd_);
        modbus_free(ctx_);
        modbus_mapping_free(map_);
    }
    fake_plc(const fake_plc&) = delete;
    fake_plc& operator=(const fake_plc&) = delete;

    [[nodiscard]] std::uint16_t port() const { return port_; }

    void set_input_float(int address, float v, config::word_order order) {
        const auto w = plc::split_words(std::bit_cast<std::uint32_t>(v), order);
        std::lock_guard lock(mutex_);
        map_->tab_input_registers[address] = w[0];
        map_->tab_input_registers[address + 1] = w[1];
    }
    void set_holding(int address, std::uint16_t v) {
        std::lock_guard lock(mutex_);
        map_->tab_registers[address] = v;
    }
    void set_discrete(int address, bool v) {
        std::lock_guard lock(mutex_);
        map_->tab_input_bits[address] = v ? 1 : 0;
    }
    [[nodiscard]] std::set<int> function_codes() {
        std::lock_guard lock(mutex_);
        return seen_;
    }

private:
    void serve() {
        std::array<std::uint8_t, MODBUS_TCP_MAX_ADU_LENGTH> query{};
        while (!stop_) {
            fd_set set;
            FD_ZERO(&set);
            FD_SET(listen_fd_, &set);
            int top = listen_fd_;
            for (const int fd : clients_) {
                FD_SET(fd, &set);
                top = std::max(top, fd);
            }
            timeval tv{0, 20000};
            if (select(top + 1, &set, nullptr, nullptr, &tv) <= 0) {
                continue;
            }
            if (FD_ISSET(listen_fd_, &set)) {
                const int fd = accept(listen_fd_, nullptr, nullptr);
                if (fd >= 0) {
                    clients_.insert(fd);
                }
            }
            for (auto it = clients_.begin(); it != clients_.end();) {
                if (!FD_ISSET(*it, &set)) {
                    ++it;
                    continue;
                }
                modbus_set_socket(ctx_, *it);
                const int n = modbus_receive(ctx_, query.data());
                if (n > 0) {
                    std::lock_guard lock(mutex_);
                    seen_.insert(query[7]);  // function code after the 7-byte MBAP header
                    modbus_reply(ctx_, query.data(), n, map_);
                    ++it;
                } else if (n < 0) {
                    close(*it);
                    it = clients_.erase(it);
                } else {
                    ++it;
                }
            }
        }
    }

    modbus_t* ctx_ = nullptr;
    modbus_mapping_t* map_ = nullptr;
    int listen_fd_ = -1;
    std::uint16_t port_ = 0;
    std::set<int> clients_;
    std::mutex mutex_;
    std::set<int> seen_;
    std::atomic<bool> stop_{false};
    std::thread thread_;
};

config::plc_connection connection(std::uint16_t port) {
    config::plc_connection c;
    c.name = "test";
    c.host = "127.0.0.1";
    c.port = port;
    c.unit_id = 1;
    c.poll_period_s = 0.05;
    c.connect_timeout_s = 0.5;
    c.response_timeout_s = 0.5;
    c.reconnect_min_s = 0.05;
    c.reconnect_max_s = 0.2;
    return c;
}

std::vector<plc::read_request> plan() {
    return {
        {config::read_function::input_registers, 0, 4, 0.05, {}},
        {config::read_function::holding_registers, 100, 1, 0.05, {}},
        {config::read_function::discrete_inputs, 0, 2, 0.05, {}},
    };
}

// Runs the io_context until `done` holds or the limit passes.
template <class Pred>
bool run_until(boost::asio::io_context& io, Pred done, std::chrono::milliseconds limit = 5000ms) {
    const auto end = std::chrono::steady_clock::now() + limit;
    while (!done() && std::chrono::steady_clock::now() < end) {
        io.restart();
        io.run_for(20ms);
    }
    return done();
}

TEST(Poller, ReadsAndDelivers) {
    fake_plc plant;
    plant.set_input_float(0, 2.25F, config::word_order::abcd);
    plant.set_input_float(2, 1234.5F, config::word_order::cdab);
    plant.set_holding(100, 0b10);
    plant.set_discrete(1, true);

    boost::asio::io_context io;
    std::vector<plc::poll_snapshot> got;
    plc::poller p{0, connection(plant.port()), plan(), io.get_executor(),
                  [&](plc::poll_snapshot s) { got.push_back(std::move(s)); }};
    p.start();
    ASSERT_TRUE(run_until(io, [&] { return got.size() >= 2; }));
    p.stop();

    const plc::poll_snapshot& s = got.back();
    EXPECT_TRUE(s.link.connected);
    ASSERT_EQ(s.results.size(), 3U);
    for (const auto& r : s.results) {
        EXPECT_TRUE(r.ok) << r.error;
    }
    const auto& ir = s.results[0].words;
    ASSERT_EQ(ir.size(), 4U);
    EXPECT_EQ(std::bit_cast<float>(plc::join_words(ir[0], ir[1], config::word_order::abcd)), 2.25F);
    EXPECT_EQ(std::bit_cast<float>(plc::join_words(ir[2], ir[3], config::word_order::cdab)), 1234.5F);
    EXPECT_EQ(s.results[1].words.at(0), 0b10);
    ASSERT_EQ(s.results[2].bits.size(), 2U);
    EXPECT_EQ(s.results[2].bits[0], 0);
    EXPECT_EQ(s.results[2].bits[1], 1);

    // Only read function codes reached the PLC.
    for (const int fc : plant.function_codes()) {
        EXPECT_TRUE(fc == 1 || fc == 2 || fc == 3 || fc == 4) << "function code " << fc;
    }
}

TEST(Poller, PlcDownAtStartIsReachedWhenItComesUp) {
    std::uint16_t port = 0;
    {
        const fake_plc probe;  // find a free port, then leave it closed
        port = probe.port();
    }
    boost::asio::io_context io;
    std::vector<plc::poll_snapshot> got;
    plc::poller p{0, connection(port), plan(), io.get_executor(),
                  [&](plc::poll_snapshot s) { got.push_back(std::move(s)); }};
    p.start();
    ASSERT_TRUE(run_until(io, [&] { return got.size() >= 3; }));
    for (const auto& s : got) {
        EXPECT_FALSE(s.link.connected);
        for (const auto& r : s.results) {
            EXPECT_FALSE(r.ok);
            EXPECT_FALSE(r.error.empty());
        }
    }
    EXPECT_NE(got.back().link.last_error.find("connect"), std::string::npos) << got.back().link.last_error;

    fake_plc plant{port};
    plant.set_input_float(0, 7.5F, config::word_order::abcd);
    ASSERT_TRUE(run_until(io, [&] { return !got.empty() && got.back().link.connected &&
                                           got.back().results.at(0).ok; }));
    p.stop();
    EXPECT_EQ(got.back().link.connects, 1U);
}

TEST(Poller, ExceptionRepliesKeepTheConnection) {
    fake_plc plant;
    boost::asio::io_context io;
    std::vector<plc::poll_snapshot> got;
    // 60 input registers exist; 58..61 does not.
    std::vector<plc::read_request> bad{{config::read_function::input_registers, 58, 4, 0.05, {}}};
    plc::poller p{0, connection(plant.port()), bad, io.get_executor(),
                  [&](plc::poll_snapshot s) { got.push_back(std::move(s)); }};
    p.start();
    ASSERT_TRUE(run_until(io, [&] { return got.size() >= 3; }));
    p.stop();
    const auto& last = got.back();
    ASSERT_EQ(last.results.size(), 1U);
    EXPECT_FALSE(last.results[0].ok);
    EXPECT_NE(last.results[0].error.find("exception 2"), std::string::npos) << last.results[0].error;
    EXPECT_TRUE(last.link.connected);
    EXPECT_EQ(last.link.connects, 1U);
}

TEST(Poller, BackoffDoublesToItsCeiling) {
    config::plc_connection c;
    c.reconnect_min_s = 1.0;
    c.reconnect_max_s = 60.0;
    EXPECT_DOUBLE_EQ(plc::backoff_s(c, 1, 1.0), 1.0);
    EXPECT_DOUBLE_EQ(plc::backoff_s(c, 2, 1.0), 2.0);
    EXPECT_DOUBLE_EQ(plc::backoff_s(c, 4, 1.0), 8.0);
    EXPECT_DOUBLE_EQ(plc::backoff_s(c, 20, 1.0), 60.0);
    EXPECT_DOUBLE_EQ(plc::backoff_s(c, 3, 1.2), 4.8);
    EXPECT_DOUBLE_EQ(plc::backoff_s(c, 3, 2.0), 4.8);  // jitter is clamped to +-20 %
}

TEST(Poller, StopsPromptlyWhileThePlcIsDown) {
    boost::asio::io_context io;
    auto c = connection(1);  // nothing listens on port 1
    c.reconnect_min_s = 30.0;
    c.reconnect_max_s = 30.0;
    plc::poller p{0, c, plan(), io.get_executor(), [](plc::poll_snapshot) {}};
    p.start();
    std::this_thread::sleep_for(100ms);
    const auto t0 = std::chrono::steady_clock::now();
    p.stop();
    EXPECT_LT(std::chrono::steady_clock::now() - t0, 2s);
}

} // namespace
