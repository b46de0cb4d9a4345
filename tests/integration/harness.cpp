#include "harness.hpp"

#include "floc/store/files.hpp"

#include <arpa/inet.h>
#include <netinet/in.h>
#include <sys/socket.h>
#include <unistd.h>

#include <bit>
#include <cerrno>
#include <fstream>
#include <regex>
#include <sstream>
#include <thread>

namespace floc::test {

std::filesystem::path source_dir() { return FLOC_SOURCE_DIR; }

std::uint16_t free_port() {
    const int fd = ::socket(AF_INET, SOCK_STREAM, 0);
    sockaddr_in a{};
    a.sin_family = AF_INET;
    a.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
    a.sin_port = 0;
    ::bind(fd, reinterpret_cast<sockaddr*>(&a), sizeof a);
    socklen_t len = sizeof a;
    ::getsockname(fd, reinterpret_cast<sockaddr*>(&a), &len);
    ::close(fd);
    return ntohs(a.sin_port);
}

scratch_dir::scratch_dir(const std::string& name)
    : path_(std::filesystem::temp_directory_path() /
            ("floc-it-" + name + "-" + std::to_string(::getpid()))) {
    std::filesystem::remove_all(path_);
    std::filesystem::create_directories(path_);
}

scratch_dir::~scratch_dir() {
    std::error_code ec;
    std::filesystem::remove_all(path_, ec);
}

bool wait_for(const std::function<bool()>& done, std::chrono::milliseconds limit,
              std::chrono::milliseconds step) {
    const auto end = std::chrono::steady_clock::now() + limit;
    while (std::chrono::steady_clock::now() < end) {
        if (done()) {
            return true;
        }
        std::this_thread::sleep_for(step);
    }
    return done();
}

namespace {

std::string read_text(const std::string& path) {
    std::error_code ec;
    return store::read_whole(path, ec).value_or("");
}

void replace_all(std::string& s, const std::string& from, const std::string& to) {
    for (std::size_t at = s.find(from); at != std::string::npos; at = s.find(from, at + to.size())) {
        s.replace(at, from.size(), to);
    }
}

} // namespace

simulated_plant::simulated_plant(const scratch_dir& dir, const std::string& scenario,
                                 const std::vector<std::string>& extra, std::optional<std::uint16_t> port)
    : out_(dir.file("flocsim.out")), client_log_(dir.file("flocsim-clients.json")) {
    std::vector<std::string> argv{FLOCSIM_PATH, "--scenario", (source_dir() / "sim_plant/scenarios" / scenario).string(),
                                  "--serve", "--port", std::to_string(port.value_or(0)), "--client-log", client_log_};
    argv.insert(argv.end(), extra.begin(), extra.end());
    process_ = std::make_unique<background_process>(argv, out_, dir.file("flocsim.err"));
    static const std::regex serving{R"(flocsim: serving .* on 127\.0\.0\.1:(\d+))"};
    const bool up = wait_for(
        [&] {
            std::smatch m;
            const std::string text = read_text(out_);
            if (std::regex_search(text, m, serving)) {
                port_ = static_cast<std::uint16_t>(std::stoul(m[1]));
                return true;
            }
            return !process_->running();
        },
        std::chrono::seconds{20});
    if (!up || port_ == 0) {
        throw std::runtime_error("flocsim did not start serving: " + read_text(dir.file("flocsim.err")));
    }
}

std::string simulated_plant::output() const { return read_text(out_); }

std::string write_flocd_config(const scratch_dir& dir, const std::string& example, std::uint16_t plc_port,
                               std::uint16_t hmi_port, const std::function<void(std::string&)>& edit) {
    std::string text = read_text((source_dir() / "config/examples" / example).string());
    replace_all(text, "port = 15020", "port = " + std::to_string(plc_port));
    replace_all(text, "port = 15021", "port = " + std::to_string(hmi_port));
    replace_all(text, "poll_period = \"5 s\"", "poll_period = \"1 s\"");
    replace_all(text, "state_dir = \"/var/lib/floc\"", "state_dir = \"" + dir.file("state") + "\"");
    replace_all(text, "journal = \"/var/lib/floc/advice-journal.jsonl\"",
                "journal = \"" + dir.file("journal.jsonl") + "\"");
    replace_all(text, "log_level = \"info\"", "log_level = \"debug\"");
    if (edit) {
        edit(text);
    }
    const std::string path = dir.file("flocd.toml");
    std::ofstream(path) << text;
    return path;
}

advisory_daemon::advisory_daemon(const scratch_dir& dir, const std::string& config, std::uint16_t hmi_port)
    : log_(dir.file("flocd.log")), port_(hmi_port) {
    process_ = std::make_unique<background_process>(std::vector<std::string>{FLOCD_PATH, "--config", config},
                                                    dir.file("flocd.out"), log_);
}

std::string advisory_daemon::log() const { return read_text(log_); }

bool advisory_daemon::wait_ready(std::chrono::milliseconds limit) {
    std::optional<std::uint16_t> first;
    return wait_for(
        [&] {
            modbus_client c{port_};
            if (!c.connected()) {
                return false;
            }
            const auto status = c.holding(0, 2);
            if (status.empty()) {
                return false;
            }
            if (!first) {
                first = status[0];
                return false;
            }
            return status[0] != *first;
        },
        limit, std::chrono::milliseconds{200});
}

modbus_client::modbus_client(std::uint16_t port, int unit) {
    ctx_ = modbus_new_tcp("127.0.0.1", port);
    if (ctx_ == nullptr) {
        return;
    }
    modbus_set_error_recovery(ctx_, MODBUS_ERROR_RECOVERY_NONE);
    modbus_set_slave(ctx_, unit);
    modbus_set_response_timeout(ctx_, 2, 0);
    connected_ = modbus_connect(ctx_) == 0;
}

modbus_client::~modbus_client() {
    if (ctx_ != nullptr) {
        modbus_close(ctx_);
        modbus_free(ctx_);
    }
}

std::vector<std::uint16_t> modbus_client::holding(int address, int count) {
    std::vector<std::uint16_t> out(static_cast<std::size_t>(count));
    errno = 0;
    if (!connected_ || modbus_read_registers(ctx_, address, count, out.data()) != count) {
        last_error_ = errno;
        return {};
    }
    return out;
}

std::vector<std::uint16_t> modbus_client::input(int address, int count) {
    std::vector<std::uint16_t> out(static_cast<std::size_t>(count));
    errno = 0;
    if (!connected_ || modbus_read_input_registers(ctx_, address, count, out.data()) != count) {
        last_error_ = errno;
        return {};
    }
    return out;
}

int modbus_client::write_register(int address, std::uint16_t value) {
    errno = 0;
    if (modbus_write_register(ctx_, address, value) == 1) {
        return 0;
    }
    last_error_ = errno;
    const int e = exception_of(errno);
    return e != 0 ? e : -1;
}

int modbus_client::write_registers(int address, const std::vector<std::uint16_t>& values) {
    errno = 0;
    const int n = static_cast<int>(values.size());
    if (modbus_write_registers(ctx_, address, n, values.data()) == n) {
        return 0;
    }
    last_error_ = errno;
    const int e = exception_of(errno);
    return e != 0 ? e : -1;
}

float f32(const std::vector<std::uint16_t>& w, std::size_t at) {
    return std::bit_cast<float>((std::uint32_t{w.at(at)} << 16U) | w.at(at + 1));
}

std::vector<std::uint16_t> words_of(float v) {
    const auto u = std::bit_cast<std::uint32_t>(v);
    return {static_cast<std::uint16_t>(u >> 16U), static_cast<std::uint16_t>(u & 0xFFFFU)};
}

int exception_of(int err) {
    return err > MODBUS_ENOBASE && err <= MODBUS_ENOBASE + 0x0B ? err - MODBUS_ENOBASE : 0;
}

} // namespace floc::test
