// End-to-end harness: flocsim and flocd started as real processes on free loopback ports, read
// with libmodbus as an HMI would. Every wait is bounded; processes are stopped by PID.
#pragma once

#include "process.hpp"

#include <modbus/modbus.h>

#include <chrono>
#include <filesystem>
#include <functional>
#include <memory>
#include <optional>
#include <string>
#include <vector>

namespace floc::test {

[[nodiscard]] std::filesystem::path source_dir();

// A free TCP port on 127.0.0.1 (bound and released; good enough on a test machine).
[[nodiscard]] std::uint16_t free_port();

// A fresh directory removed at the end of the test.
class scratch_dir {
public:
    explicit scratch_dir(const std::string& name);
    ~scratch_dir();
    scratch_dir(const scratch_dir&) = delete;
    scratch_dir& operator=(const scratch_dir&) = delete;
    [[nodiscard]] const std::filesystem::path& path() const { return path_; }
    [[nodiscard]] std::string file(const std::string& name) const { return (path_ / name).string(); }

private:
    std::filesystem::path path_;
};

// Waits until `done()` or the limit; true when done.
bool wait_for(const std::function<bool()>& done, std::chrono::milliseconds limit,
              std::chrono::milliseconds step = std::chrono::milliseconds{50});

// flocsim serving `scenario` on 127.0.0.1 port 0; `extra` are more options (time mode, faults).
class simulated_plant {
public:
    simulated_plant(const scratch_dir& dir, const std::string& scenario, const std::vector<std::string>& extra,
                    std::optional<std::uint16_t> port = std::nullopt);
    [[nodiscard]] std::uint16_t port() const { return port_; }
    [[nodiscard]] std::string client_log() const { return client_log_; }
    [[nodiscard]] std::string output() const;
    int stop() { return process_->stop(); }
    [[nodiscard]] background_process& process() { return *process_; }

private:
    std::string out_;
    std::string client_log_;
    std::unique_ptr<background_process> process_;
    std::uint16_t port_ = 0;
};

// A flocd config derived from a config/examples file: the PLC at `plc_port`, the HMI server at
// `hmi_port`, state and journal in `dir`, polls every second; `edit` may change more text.
[[nodiscard]] std::string write_flocd_config(const scratch_dir& dir, const std::string& example,
                                             std::uint16_t plc_port, std::uint16_t hmi_port,
                                             const std::function<void(std::string&)>& edit = {});

class advisory_daemon {
public:
    advisory_daemon(const scratch_dir& dir, const std::string& config, std::uint16_t hmi_port);
    [[nodiscard]] std::uint16_t port() const { return port_; }
    [[nodiscard]] std::string log() const;
    [[nodiscard]] background_process& process() { return *process_; }
    int stop() { return process_->stop(); }
    // True once the HMI port answers and the heartbeat has counted.
    bool wait_ready(std::chrono::milliseconds limit = std::chrono::seconds{20});

private:
    std::string log_;
    std::unique_ptr<background_process> process_;
    std::uint16_t port_;
};

// A libmodbus client on 127.0.0.1, as an HMI or a bench tool.
class modbus_client {
public:
    explicit modbus_client(std::uint16_t port, int unit = 1);
    ~modbus_client();
    modbus_client(const modbus_client&) = delete;
    modbus_client& operator=(const modbus_client&) = delete;

    [[nodiscard]] bool connected() const { return connected_; }
    // Holding (03) or input (04) registers; empty on failure, with errno in last_error().
    [[nodiscard]] std::vector<std::uint16_t> holding(int address, int count);
    [[nodiscard]] std::vector<std::uint16_t> input(int address, int count);
    // 06 / 16; the exception code on refusal (0 = accepted, -1 = no reply).
    int write_register(int address, std::uint16_t value);
    int write_registers(int address, const std::vector<std::uint16_t>& values);
    [[nodiscard]] int last_error() const { return last_error_; }

private:
    modbus_t* ctx_ = nullptr;
    bool connected_ = false;
    int last_error_ = 0;
};

[[nodiscard]] float f32(const std::vector<std::uint16_t>& words, std::size_t at);  // abcd
[[nodiscard]] std::vector<std::uint16_t> words_of(float v);                        // abcd

// The exception code in an errno from libmodbus (0 when it is not a Modbus exception).
[[nodiscard]] int exception_of(int err);

} // namespace floc::test
