// The server as a real process (modbus_test_server) against independent peers on loopback:
// Debian's python3-pymodbus 3.0 (run by /usr/bin/python3), mbpoll 1.4 and libmodbus 3.1.6,
// which all read what the others wrote; and tshark 4.0's Modbus/TCP dissector, which must
// decode a captured session without malformed packets or warnings. The function codes and
// exception codes checked are those of the MODBUS Application Protocol Specification V1.1b3.
#include "child_process.hpp"
#include "libmodbus_client.hpp"
#include "process.hpp"

#include <gtest/gtest.h>

#include <unistd.h>

#include <algorithm>
#include <array>
#include <cerrno>
#include <csignal>
#include <filesystem>
#include <map>
#include <memory>
#include <regex>
#include <sstream>
#include <string>
#include <thread>
#include <vector>

namespace {

namespace fs = std::filesystem;
using namespace std::chrono_literals;
using floc::modbus::test::child_process;
using floc::modbus::test::libmodbus_connect;
using floc::modbus::test::modbus_ptr;
using floc::test::run_process;

const std::string test_server{MODBUS_TEST_SERVER_PATH};
const std::string peer_script = std::string{FLOC_SOURCE_DIR} + "/tests/server/pymodbus_peer.py";
const std::string python = "/usr/bin/python3"; // Debian's, where python3-pymodbus lives
const std::string mbpoll = "/usr/bin/mbpoll";
const std::string tshark = "/usr/bin/tshark";

// The test server as a child process, on the port it printed.
class served {
public:
    served() {
        if (const auto line = proc_.wait_for_line("port ", 10s)) {
            port_ = static_cast<std::uint16_t>(std::stoi(line->substr(5)));
        }
    }
    [[nodiscard]] std::uint16_t port() const { return port_; }
    [[nodiscard]] std::string port_text() const { return std::to_string(port_); }
    // Stops the server by closing its standard input; returns its report of requests.
    std::string finish() {
        proc_.close_input();
        const auto code = proc_.wait(10s);
        EXPECT_EQ(code, 0) << proc_.err();
        return proc_.out();
    }

private:
    child_process proc_{{test_server, "--time-limit", "120"}};
    std::uint16_t port_ = 0;
};

bool tool_present(const std::string& path) {
    return ::access(path.c_str(), X_OK) == 0;
}

// "name v1 v2 ..." lines printed by pymodbus_peer.py, by name.
std::map<std::string, std::string> peer_lines(const std::string& out) {
    std::map<std::string, std::string> lines;
    std::istringstream in{out};
    for (std::string line; std::getline(in, line);) {
        const auto space = line.find(' ');
        lines[line.substr(0, space)] = space == std::string::npos ? "" : line.substr(space + 1);
    }
    return lines;
}

// mbpoll's "[REF]: <tab>VALUE" lines, as "REF=VALUE" joined by spaces.
std::string mbpoll_values(const std::string& out) {
    static const std::regex value_line{R"(\[(\d+)\]:\s+(-?\d+))"};
    std::string values;
    for (auto it = std::sregex_iterator(out.begin(), out.end(), value_line);
         it != std::sregex_iterator(); ++it) {
        values += (values.empty() ? "" : " ") + (*it)[1].str() + "=" + (*it)[2].str();
    }
    return values;
}

// What the pymodbus write phase must have seen: the server's fixed bank, its own writes, the
// spec's mask-write example (AppSpec §6.16: 0x12 AND 0xF2 OR 0x25 = 0x17 = 23) and the
// exception codes of §7.
void check_write_phase(const std::map<std::string, std::string>& seen) {
    const std::map<std::string, std::string> expected{
        {"input_registers_0_4", "1000 1001 1002 1003 1004"},
        {"discrete_inputs_0_8", "1 0 0 1 0 0 1 0 0"},
        {"holding_10_13", "1111 2222 3333 4444"},
        {"coils_20_29", "1 0 1 1 0 0 1 1 1 0"},
        {"mask_write_4", "23"},
        {"read_write_29_31", "0 43690 48059"}, // 0xAAAA, 0xBBBB written before the read
        {"device_basic", "0=floc project 1=FLOCTEST 2=0.1"},
        {"device_regular",
         "0=floc project 1=FLOCTEST 2=0.1 4=floc Modbus/TCP test server 5=loopback"},
        {"exception_read_past_end", "2"},   // illegal data address
        {"exception_write_protected", "2"}, // the bank's read-only range
        {"exception_quantity", "3"},        // 126 registers: illegal data value
        {"done", ""},
    };
    for (const auto& [name, value] : expected) {
        const auto it = seen.find(name);
        ASSERT_NE(it, seen.end()) << "pymodbus did not report " << name;
        EXPECT_EQ(it->second, value) << name;
    }
}

TEST(Interop, ToolsArePresent) {
    // deploy/setup installs them (python3-pymodbus, python3-serial-asyncio, mbpoll, tshark).
    EXPECT_TRUE(tool_present(python)) << python << " missing";
    EXPECT_TRUE(tool_present(mbpoll)) << mbpoll << " missing: apt-get install mbpoll";
    EXPECT_TRUE(tool_present(tshark)) << tshark << " missing: apt-get install tshark";
    const auto r = run_process({python, "-c", "import pymodbus.client"}, 30s);
    EXPECT_EQ(r.exit_code, 0) << "python3-pymodbus not importable by " << python << ": " << r.err;
}

TEST(Interop, IndependentPeersReadWhatTheOthersWrote) {
    served server;
    ASSERT_NE(server.port(), 0) << "modbus_test_server did not print its port";
    const std::string port = server.port_text();

    // 1. pymodbus (unit id 0) writes and reads every function code.
    const auto py = run_process({python, peer_script, port, "write"}, 60s);
    ASSERT_EQ(py.exit_code, 0) << py.out << py.err;
    check_write_phase(peer_lines(py.out));

    // 2. mbpoll (unit id 1) reads pymodbus's registers and coils; -r is 1-based unless -0.
    const auto holding = run_process({mbpoll, "-m", "tcp", "-p", port, "-a", "1", "-r", "11", "-c",
                                      "4", "-t", "4", "-1", "-o", "2", "127.0.0.1"},
                                     30s);
    ASSERT_EQ(holding.exit_code, 0) << holding.out << holding.err;
    EXPECT_EQ(mbpoll_values(holding.out), "11=1111 12=2222 13=3333 14=4444");
    const auto coils = run_process({mbpoll, "-m", "tcp", "-p", port, "-a", "1", "-0", "-r", "20",
                                    "-c", "10", "-t", "0", "-1", "-o", "2", "127.0.0.1"},
                                   30s);
    ASSERT_EQ(coils.exit_code, 0) << coils.out << coils.err;
    EXPECT_EQ(mbpoll_values(coils.out), "20=1 21=0 22=1 23=1 24=0 25=0 26=1 27=1 28=1 29=0");
    const auto inputs = run_process({mbpoll, "-m", "tcp", "-p", port, "-a", "1", "-0", "-r", "3",
                                     "-c", "2", "-t", "3", "-1", "-o", "2", "127.0.0.1"},
                                    30s);
    ASSERT_EQ(inputs.exit_code, 0) << inputs.out << inputs.err;
    EXPECT_EQ(mbpoll_values(inputs.out), "3=1003 4=1004");

    // mbpoll writes one register (FC 06) and two (FC 16).
    const auto one = run_process({mbpoll, "-m", "tcp", "-p", port, "-a", "1", "-r", "15", "-t", "4",
                                  "-o", "2", "127.0.0.1", "5555"},
                                 30s);
    ASSERT_EQ(one.exit_code, 0) << one.out << one.err;
    EXPECT_NE(one.out.find("Written 1 references"), std::string::npos) << one.out;
    const auto two = run_process({mbpoll, "-m", "tcp", "-p", port, "-a", "1", "-0", "-r", "15",
                                  "-t", "4", "-o", "2", "127.0.0.1", "6666", "7777"},
                                 30s);
    ASSERT_EQ(two.exit_code, 0) << two.out << two.err;

    // mbpoll sees the spec's exception: 199 + 2 is past the 200 registers.
    const auto past = run_process({mbpoll, "-m", "tcp", "-p", port, "-a", "1", "-0", "-r", "199",
                                   "-c", "2", "-t", "4", "-1", "-o", "2", "127.0.0.1"},
                                  30s);
    EXPECT_EQ(past.exit_code, 1);
    EXPECT_NE(past.err.find("Illegal data address"), std::string::npos) << past.err;

    // 3. libmodbus (unit id 0xFF) reads everything written so far and writes one more.
    {
        const modbus_ptr ctx = libmodbus_connect(server.port());
        ASSERT_TRUE(ctx) << "libmodbus could not connect";
        std::array<std::uint16_t, 7> regs{};
        ASSERT_EQ(modbus_read_registers(ctx.get(), 10, 7, regs.data()), 7);
        EXPECT_EQ(regs, (std::array<std::uint16_t, 7>{1111, 2222, 3333, 4444, 5555, 6666, 7777}));
        std::array<std::uint8_t, 10> bits{};
        ASSERT_EQ(modbus_read_bits(ctx.get(), 20, 10, bits.data()), 10);
        EXPECT_EQ(bits, (std::array<std::uint8_t, 10>{1, 0, 1, 1, 0, 0, 1, 1, 1, 0}));
        std::array<std::uint8_t, 1> coil5{};
        ASSERT_EQ(modbus_read_bits(ctx.get(), 5, 1, coil5.data()), 1);
        EXPECT_EQ(coil5[0], 1);
        ASSERT_EQ(modbus_write_register(ctx.get(), 17, 8888), 1);
        errno = 0;
        EXPECT_EQ(modbus_write_register(ctx.get(), 181, 1), -1);
        EXPECT_EQ(errno, EMBXILADD);
    }

    // 4. pymodbus reads back what mbpoll and libmodbus wrote.
    const auto back = run_process({python, peer_script, port, "read"}, 60s);
    ASSERT_EQ(back.exit_code, 0) << back.out << back.err;
    const auto lines = peer_lines(back.out);
    EXPECT_EQ(lines.count("holding_10_17") == 1 ? lines.at("holding_10_17") : "",
              "1111 2222 3333 4444 5555 6666 7777 8888");
    EXPECT_EQ(lines.count("coil_5") == 1 ? lines.at("coil_5") : "", "1");

    // The server's own record: every function code the peers used, from 127.0.0.1.
    const std::string report = server.finish();
    for (const int fc : {1, 2, 3, 4, 5, 6, 15, 16, 22, 23, 43}) {
        EXPECT_NE(report.find("client 127.0.0.1 function " + std::to_string(fc) + " requests"),
                  std::string::npos)
            << "function " << fc << " missing from\n"
            << report;
    }
}

// tshark fields of one decoded Modbus/TCP frame.
struct decoded {
    std::uint16_t src_port = 0;
    std::string tid, unit, function, exception, registers, strings;
};

// The tshark command line that reads `file` with the Modbus/TCP dissector on `port`. The port
// preference tells the dissector which side is the server, so that it can tell queries from
// responses; -d makes it decode the non-standard port at all.
std::vector<std::string> tshark_reading(const fs::path& file, const std::string& port,
                                        std::initializer_list<const char*> more) {
    std::vector<std::string> argv{tshark,
                                  "-r",
                                  file.string(),
                                  "-o",
                                  "mbtcp.tcp.port:" + port,
                                  "-d",
                                  "tcp.port==" + port + ",mbtcp"};
    argv.insert(argv.end(), more.begin(), more.end());
    return argv;
}

// Modbus/TCP frames in a capture file (that may still be written to).
std::size_t modbus_frames_in(const fs::path& file, const std::string& port) {
    const auto r = run_process(
        tshark_reading(file, port, {"-Y", "mbtcp", "-T", "fields", "-e", "frame.number"}), 60s);
    return static_cast<std::size_t>(std::count(r.out.begin(), r.out.end(), '\n'));
}

std::vector<decoded> decode_capture(const fs::path& file, const std::string& port,
                                    std::string& problems) {
    const auto bad =
        run_process(tshark_reading(file, port,
                                   {"-Y", "_ws.malformed || _ws.expert.severity >= warning", "-T",
                                    "fields", "-e", "frame.number", "-e", "_ws.expert.message"}),
                    60s);
    EXPECT_EQ(bad.exit_code, 0) << bad.err;
    problems = bad.out;

    const auto rows = run_process(tshark_reading(file, port, {"-Y", "mbtcp",
                                                              "-T", "fields",
                                                              "-E", "separator=|",
                                                              "-e", "tcp.srcport",
                                                              "-e", "mbtcp.trans_id",
                                                              "-e", "mbtcp.unit_id",
                                                              "-e", "modbus.func_code",
                                                              "-e", "modbus.exception_code",
                                                              "-e", "modbus.regval_uint16",
                                                              "-e", "modbus.object_str_value"}),
                                  60s);
    EXPECT_EQ(rows.exit_code, 0) << rows.err;
    std::vector<decoded> out;
    std::istringstream in{rows.out};
    for (std::string line; std::getline(in, line);) {
        std::vector<std::string> f;
        std::stringstream cells{line};
        for (std::string cell; std::getline(cells, cell, '|');) {
            f.push_back(cell);
        }
        f.resize(7);
        decoded d;
        d.src_port = static_cast<std::uint16_t>(std::stoul(f[0].empty() ? "0" : f[0]));
        d.tid = f[1];
        d.unit = f[2];
        d.function = f[3];
        d.exception = f[4];
        d.registers = f[5];
        d.strings = f[6];
        out.push_back(d);
    }
    return out;
}

TEST(Interop, TsharkDecodesACapturedSessionCleanly) {
    // pymodbus's write phase sends 17 requests, then libmodbus 2.
    constexpr std::size_t expected_requests = 19;
    ASSERT_TRUE(tool_present(tshark)) << tshark << " missing: apt-get install tshark";
    served server;
    ASSERT_NE(server.port(), 0);
    const std::string port = server.port_text();
    const fs::path file = fs::temp_directory_path() /
                          ("floc-modbus-" + std::to_string(::getpid()) + "-" + port + ".pcapng");
    fs::remove(file);

    {
        child_process capture{{tshark, "-i", "lo", "-f", "tcp port " + port, "-w", file.string()}};
        ASSERT_TRUE(capture.wait_for_line("Capturing on", 20s, true).has_value())
            << "tshark could not capture on lo (it needs root or the wireshark group): "
            << capture.err();

        const auto py = run_process({python, peer_script, port, "write"}, 60s);
        ASSERT_EQ(py.exit_code, 0) << py.out << py.err;
        const modbus_ptr ctx = libmodbus_connect(server.port());
        ASSERT_TRUE(ctx);
        std::array<std::uint16_t, 4> regs{};
        ASSERT_EQ(modbus_read_registers(ctx.get(), 10, 4, regs.data()), 4);
        std::array<std::uint8_t, 3> bits{};
        ASSERT_EQ(modbus_read_input_bits(ctx.get(), 0, 3, bits.data()), 3);

        // The capture hands packets to its file in batches: stopping it right after the
        // traffic loses the last batch. Wait (bounded) until the file holds every frame.
        const auto deadline = std::chrono::steady_clock::now() + 20s;
        while (std::chrono::steady_clock::now() < deadline &&
               modbus_frames_in(file, port) < 2 * expected_requests) {
            std::this_thread::sleep_for(200ms);
        }
        capture.send_signal(SIGINT);
        const auto code = capture.wait(20s);
        ASSERT_TRUE(code.has_value()) << "tshark did not stop";
        EXPECT_EQ(*code, 0) << capture.err();
    }
    ASSERT_TRUE(fs::exists(file)) << "no capture file " << file;

    std::string problems;
    const std::vector<decoded> frames = decode_capture(file, port, problems);
    fs::remove(file);
    EXPECT_EQ(problems, "") << "tshark reports malformed packets or warnings";

    // Every request answered once, in order.
    std::vector<decoded> requests;
    std::vector<decoded> responses;
    for (const decoded& d : frames) {
        (d.src_port == server.port() ? responses : requests).push_back(d);
    }
    ASSERT_EQ(requests.size(), expected_requests);
    ASSERT_EQ(responses.size(), expected_requests);
    for (std::size_t i = 0; i < requests.size(); ++i) {
        EXPECT_EQ(responses[i].tid, requests[i].tid) << "frame pair " << i;
        EXPECT_EQ(responses[i].unit, requests[i].unit) << "frame pair " << i;
        EXPECT_EQ(responses[i].function, requests[i].function) << "frame pair " << i;
    }
    // Function codes in order: pymodbus's write phase, then libmodbus's two reads.
    std::string order;
    for (const decoded& d : requests) {
        order += (order.empty() ? "" : " ") + d.function;
    }
    EXPECT_EQ(order, "16 6 5 15 4 2 3 1 6 22 3 23 43 43 3 6 4 3 2");
    EXPECT_EQ(requests.front().unit, "0");  // pymodbus's default unit id
    EXPECT_EQ(requests.back().unit, "255"); // libmodbus's
    EXPECT_EQ(responses[4].registers, "1000,1001,1002,1003,1004");
    EXPECT_EQ(responses[6].registers, "1111,2222,3333,4444");
    EXPECT_EQ(responses[12].strings, "floc project,FLOCTEST,0.1");
    EXPECT_EQ(responses[13].strings,
              "floc project,FLOCTEST,0.1,floc Modbus/TCP test server,loopback");
    EXPECT_EQ(responses[14].exception, "2");
    EXPECT_EQ(responses[15].exception, "2");
    EXPECT_EQ(responses[16].exception, "3");
    EXPECT_EQ(responses[17].registers, "1111,2222,3333,4444");
    server.finish();
}

} // namespace
