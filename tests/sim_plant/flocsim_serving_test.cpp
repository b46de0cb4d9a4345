// flocsim serving, run as a real process on 127.0.0.1 with a free port: the register map read by
// libmodbus 3.1.6 and by an independent client (Debian's python3-pymodbus 3.0, run by
// /usr/bin/python3) with the same values; the values are the model's at that plant time; the
// exception codes of the MODBUS Application Protocol Specification V1.1b3 (§7: 01 illegal
// function, 02 illegal data address, 03 illegal data value, 04 server device failure); lockstep
// time; a bench write; the client log; the fault bench's sensor and protocol faults on the wire
// at their scheduled times; and the operator stand-in against a fake floc advisory server built
// from flocd's register map. Every wait is bounded; the child is ended when a test fails.
#include "advisory_support.hpp"
#include "child_process.hpp"
#include "libmodbus_client.hpp"
#include "process.hpp"
#include "support.hpp"
#include "test_files.hpp"

#include "floc/config/load.hpp"
#include "floc/modbus/asio.hpp"
#include "floc/modbus/register_bank.hpp"
#include "floc/modbus/server.hpp"
#include "floc/registers/image.hpp"
#include "floc/sim/plc_host.hpp"

#include <gtest/gtest.h>

#include <unistd.h>

#include <array>
#include <bit>
#include <cerrno>
#include <cmath>
#include <csignal>
#include <filesystem>
#include <fstream>
#include <map>
#include <regex>
#include <sstream>
#include <thread>

namespace {

namespace fs = std::filesystem;
using namespace std::chrono_literals;
using floc::modbus::test::child_process;
using floc::modbus::test::libmodbus_connect;
using floc::modbus::test::modbus_ptr;
using floc::sim::test::slurp;
using floc::test::run_process;

const fs::path source_dir{FLOC_SOURCE_DIR};
const std::string flocsim{FLOCSIM_PATH};
const std::string python = "/usr/bin/python3"; // Debian's, where python3-pymodbus lives
const std::string pymodbus_reader =
    (source_dir / "tests/sim_plant/pymodbus_plc_reader.py").string();

#ifdef FLOC_SIM_TESTS_SANITIZED
constexpr auto start_limit = 300s; // the steady state before serving takes longer under sanitizers
#else
constexpr auto start_limit = 120s;
#endif

std::string scenario(const std::string& name) {
    return (source_dir / "sim_plant/scenarios" / (name + ".toml")).string();
}

float float_at(const std::vector<std::uint16_t>& w, std::size_t i) {
    return std::bit_cast<float>((std::uint32_t{w.at(i)} << 16U) | w.at(i + 1));
}

std::uint32_t u32_at(const std::vector<std::uint16_t>& w, std::size_t i) {
    return (std::uint32_t{w.at(i)} << 16U) | w.at(i + 1);
}

std::array<std::uint16_t, 2> float_words(float v) {
    const auto u = std::bit_cast<std::uint32_t>(v);
    return {static_cast<std::uint16_t>(u >> 16U), static_cast<std::uint16_t>(u & 0xFFFFU)};
}

// flocsim serving in the background, on the port it printed.
class served {
public:
    explicit served(std::vector<std::string> args) : proc_(with_program(std::move(args))) {
        if (const auto line = proc_.wait_for_line("flocsim: serving ", start_limit)) {
            first_line_ = *line;
            port_ = static_cast<std::uint16_t>(std::stoi(line->substr(line->rfind(':') + 1)));
        }
    }
    [[nodiscard]] std::uint16_t port() const { return port_; }
    [[nodiscard]] const std::string& first_line() const { return first_line_; }
    child_process& proc() { return proc_; }
    // SIGTERM; the exit code.
    std::optional<int> stop() {
        proc_.send_signal(SIGTERM);
        return proc_.wait(30s);
    }
    // Reads what the child wrote so far, so that its pipes never fill.
    void drain() { (void)proc_.wait_for_line("\x01", 1ms); }

private:
    static std::vector<std::string> with_program(std::vector<std::string> args) {
        args.insert(args.begin(), flocsim);
        return args;
    }
    child_process proc_;
    std::uint16_t port_ = 0;
    std::string first_line_;
};

// One read of `count` registers (function 3 or 4); empty when refused, errno then says why.
std::optional<std::vector<std::uint16_t>> read_regs(modbus_t* ctx, int function, int address,
                                                    int count) {
    std::vector<std::uint16_t> w(static_cast<std::size_t>(count));
    const int n = function == 4 ? modbus_read_input_registers(ctx, address, count, w.data())
                                : modbus_read_registers(ctx, address, count, w.data());
    if (n != count) {
        return std::nullopt;
    }
    return w;
}

// A request of raw PDU bytes; the reply's PDU (function code and data).
std::vector<std::uint8_t> raw_request(modbus_t* ctx, std::vector<std::uint8_t> pdu) {
    pdu.insert(pdu.begin(), 1); // unit id; libmodbus adds the rest of the MBAP header
    if (modbus_send_raw_request(ctx, pdu.data(), static_cast<int>(pdu.size())) < 0) {
        return {};
    }
    std::array<std::uint8_t, MODBUS_TCP_MAX_ADU_LENGTH> rsp{};
    const int n = modbus_receive_confirmation(ctx, rsp.data());
    if (n < 8) {
        return {};
    }
    return {rsp.begin() + 7, rsp.begin() + n};
}

// The errno of a libmodbus connection attempt (0 when it connects).
int connect_error(std::uint16_t port) {
    modbus_t* ctx = modbus_new_tcp("127.0.0.1", port);
    if (ctx == nullptr) {
        return -1;
    }
    const int rc = modbus_connect(ctx);
    const int error = rc == 0 ? 0 : errno;
    modbus_close(ctx);
    modbus_free(ctx);
    return error;
}

TEST(FlocsimServing, RefusesBadServingOptionsBeforeServing) {
    const auto refused = [](std::vector<std::string> args, const std::string& message) {
        args.insert(args.begin(), {flocsim, "--scenario", scenario("marrowby")});
        const auto r = run_process(args, 30s);
        EXPECT_EQ(r.exit_code, 64) << args.back() << "\n" << r.err;
        EXPECT_NE(r.err.find(message), std::string::npos) << r.err;
        EXPECT_TRUE(r.out.empty()) << r.out;
    };
    const std::string caution = "never point the simulator at a real plant network";
    refused({"--bind", "0.0.0.0"}, caution);
    refused({"--bind", "192.168.10.20"}, "192.168.10.20 is not a loopback address (127.0.0.0/8)");
    refused({"--bind", "localhost"}, "expected an IPv4 address like 127.0.0.1");
    refused({"--hmi", "10.1.2.3:502", "--hmi-config", "x.toml"}, caution);
    refused({"--hmi", "127.0.0.1", "--hmi-config", "x.toml"},
            "expected an IPv4 address and a port");
    refused({"--hmi", "127.0.0.1:15021"}, "--hmi needs --hmi-config");
    refused({"--show-advice"}, "need --hmi ADDRESS:PORT");
    refused({"--enter-lab"}, "need --hmi ADDRESS:PORT");
    refused({"--port", "70000"}, "expected a port number from 0 to 65535");
    refused({"--speed", "0"}, "a number above 0");
    refused({"--speed", "60", "--fast"}, "exclude each other");
    refused({"--lockstep", "soon"}, "expected a duration");
    refused({"--serve", "--to-steady-state"}, "cannot be served");
    const auto unwritable = run_process({flocsim, "--scenario", scenario("carrick-fen"), "--port",
                                         "0", "--client-log", "/nonexistent/dir/clients.json"},
                                        start_limit);
    EXPECT_EQ(unwritable.exit_code, 73) << unwritable.err;
    EXPECT_NE(unwritable.err.find("/nonexistent/dir is not a directory"), std::string::npos)
        << unwritable.err;
    refused({"--to-steady-state", "--port", "0"}, "cannot be served");
}

TEST(FlocsimServing, TheLabRoundNeedsALabSheetThatFitsFlocdsConfig) {
    const std::string example = (source_dir / "config/examples/marrowby-si.toml").string();
    // A scenario without a [lab_sheet]: nothing to type in.
    const auto none = run_process({flocsim, "--scenario", scenario("carrick-fen"), "--port", "0",
                                   "--hmi", "127.0.0.1:1", "--hmi-config", example, "--enter-lab"},
                                  30s);
    EXPECT_EQ(none.exit_code, 64) << none.err;
    EXPECT_NE(none.err.find("carrick-fen.toml has no [lab_sheet] to type in"), std::string::npos)
        << none.err;
    // A flocd config whose settled-volume entry of train A has another name: the sheet's entry is
    // reported where it is written, and flocsim does not start.
    const fs::path dir = floc::sim::test::temp_dir("flocsim-lab-config");
    std::string text = slurp(example);
    for (std::size_t at = text.find("\"a_sv30\""); at != std::string::npos;
         at = text.find("\"a_sv30\"", at)) {
        text.replace(at, 8, "\"a_svol\"");
    }
    const std::string renamed = (dir / "renamed.toml").string();
    std::ofstream(renamed) << text;
    const auto bad = run_process({flocsim, "--scenario", scenario("marrowby"), "--port", "0",
                                  "--hmi", "127.0.0.1:1", "--hmi-config", renamed, "--enter-lab"},
                                 30s);
    EXPECT_EQ(bad.exit_code, 78) << bad.err;
    EXPECT_NE(bad.err.find(scenario("marrowby") + ":"), std::string::npos) << bad.err;
    EXPECT_NE(bad.err.find("lab_sheet.entry[4].name: found the lab entry \"a_sv30\", not in " +
                           renamed + "; expected the name of a lab entry of the flocd config"),
              std::string::npos)
        << bad.err;
    EXPECT_NE(bad.err.find("does not fit the flocd config " + renamed), std::string::npos)
        << bad.err;
    EXPECT_TRUE(bad.out.empty()) << bad.out;
    fs::remove_all(dir);
}

TEST(FlocsimServing, LockstepMovesOneStepPerReadOfThePlantTime) {
    served sim{{"--scenario", scenario("marrowby"), "--port", "0", "--lockstep", "1min"}};
    ASSERT_NE(sim.port(), 0) << sim.proc().err();
    EXPECT_TRUE(std::regex_match(
        sim.first_line(), std::regex{R"(flocsim: serving Marrowby WRW on 127\.0\.0\.1:\d+)"}))
        << sim.first_line();
    const modbus_ptr ctx = libmodbus_connect(sim.port(), 1);
    ASSERT_TRUE(ctx);
    for (std::uint32_t step = 0; step < 5; ++step) {
        const auto t = read_regs(ctx.get(), 4, 0, 2);
        ASSERT_TRUE(t) << modbus_strerror(errno);
        EXPECT_EQ(u32_at(*t, 0), 60U * step);
    }
    // Reads that do not touch the plant time do not move it.
    for (int i = 0; i < 3; ++i) {
        ASSERT_TRUE(read_regs(ctx.get(), 4, 2, 38));
        ASSERT_TRUE(read_regs(ctx.get(), 3, 1000, 8));
    }
    // A read that ends at the plant time's low word touches it too.
    const auto low = read_regs(ctx.get(), 4, 1, 1);
    ASSERT_TRUE(low);
    EXPECT_EQ((*low)[0], 300);
    const auto t = read_regs(ctx.get(), 4, 0, 2);
    ASSERT_TRUE(t);
    EXPECT_EQ(u32_at(*t, 0), 360U);
    EXPECT_EQ(sim.stop(), 0);
}

TEST(FlocsimServing, TheRegistersHoldTheModelsValuesAtThatPlantTime) {
    served sim{{"--scenario", scenario("marrowby"), "--port", "0", "--lockstep", "5min"}};
    ASSERT_NE(sim.port(), 0) << sim.proc().err();
    const modbus_ptr ctx = libmodbus_connect(sim.port(), 1);
    ASSERT_TRUE(ctx);
    for (int i = 0; i < 6; ++i) {
        ASSERT_TRUE(read_regs(ctx.get(), 4, 0, 2));
    }
    // At 30 min: the blocks without plant time, then plant time and every sensor in one read
    // (after which the plant takes its next step).
    const auto us = read_regs(ctx.get(), 4, 200, 20);
    const auto setpoints = read_regs(ctx.get(), 3, 1000, 8);
    const auto pumps = read_regs(ctx.get(), 3, 1010, 12);
    const auto blowers = read_regs(ctx.get(), 3, 100, 1);
    const auto si = read_regs(ctx.get(), 4, 0, 40);
    ASSERT_TRUE(si && us && setpoints && pumps && blowers);
    EXPECT_EQ(u32_at(*si, 0), 1800U);

    // The same plant, in process, to the same time in the same steps.
    const floc::sim::scenario& s = floc::sim::test::marrowby();
    floc::sim::plc_host host{s, floc::sim::test::marrowby_steady_state()};
    for (double t = 300.0; t <= 1800.0; t += 300.0) {
        ASSERT_TRUE(host.advance_to(t));
    }
    const auto expect_block = [&](floc::sim::register_table table, std::uint16_t first,
                                  const std::vector<std::uint16_t>& got) {
        for (std::size_t i = 0; i < got.size(); ++i) {
            EXPECT_EQ(got[i], host.image().value(table, static_cast<std::uint16_t>(first + i)))
                << "table " << static_cast<int>(table) << " address " << first + i;
        }
    };
    expect_block(floc::sim::register_table::input_registers, 0, *si);
    expect_block(floc::sim::register_table::input_registers, 200, *us);
    expect_block(floc::sim::register_table::holding_registers, 1000, *setpoints);
    expect_block(floc::sim::register_table::holding_registers, 1010, *pumps);
    expect_block(floc::sim::register_table::holding_registers, 100, *blowers);
    // And they are the sensors' readings: a_oxic1_do at 6-7 (mg/L), a_influent_flow at 2-3 (m3/d)
    // and at 200 (gpm, scale 1).
    EXPECT_EQ(float_at(*si, 6), static_cast<float>(host.sim().sensors()[2].reading()));
    EXPECT_NEAR(float_at(*si, 2), (*us)[0] * 5.450992, 3.0); // 1 gpm = 5.450992 m3/d (NIST SP 811)
    EXPECT_EQ((*blowers)[0], 3);                             // both trains' blowers run
    EXPECT_EQ(float_at(*setpoints, 0), 2.0F);                // a_oxic1's DO set point
    EXPECT_EQ(sim.stop(), 0);
}

TEST(FlocsimServing, LibmodbusAndPymodbusReadTheSameValues) {
    ASSERT_EQ(::access(python.c_str(), X_OK), 0) << python << " missing";
    served sim{{"--scenario", scenario("marrowby"), "--port", "0", "--lockstep", "1min"}};
    ASSERT_NE(sim.port(), 0) << sim.proc().err();
    std::map<std::string, std::string> mine;
    {
        const modbus_ptr ctx = libmodbus_connect(sim.port(), 1);
        ASSERT_TRUE(ctx);
        const auto join = [](const std::vector<std::uint16_t>& w) {
            std::string s;
            for (const std::uint16_t v : w) {
                s += (s.empty() ? "" : " ") + std::to_string(v);
            }
            return s;
        };
        const std::vector<std::tuple<std::string, int, int, int>> blocks{
            {"input_2_39", 4, 2, 38},
            {"input_200_219", 4, 200, 20},
            {"holding_100", 3, 100, 1},
            {"holding_1000_1007", 3, 1000, 8},
            {"holding_1010_1021", 3, 1010, 12}};
        for (const auto& [name, fc, address, count] : blocks) {
            const auto w = read_regs(ctx.get(), fc, address, count);
            ASSERT_TRUE(w) << name << ": " << modbus_strerror(errno);
            mine[name] = join(*w);
        }
        std::array<std::uint8_t, 1> bit{};
        ASSERT_EQ(modbus_read_input_bits(ctx.get(), 0, 1, bit.data()), 1);
        mine["discrete_0"] = std::to_string(bit[0]);
    }
    const auto py = run_process({python, pymodbus_reader, std::to_string(sim.port())}, 60s);
    ASSERT_EQ(py.exit_code, 0) << py.out << py.err;
    std::map<std::string, std::string> theirs;
    std::istringstream in{py.out};
    for (std::string line; std::getline(in, line);) {
        const auto space = line.find(' ');
        theirs[line.substr(0, space)] = space == std::string::npos ? "" : line.substr(space + 1);
    }
    for (const auto& [name, values] : mine) {
        EXPECT_EQ(theirs[name], values) << name;
    }
    EXPECT_EQ(theirs["input_38_41"], "exception 2"); // AppSpec §7: past the map
    EXPECT_EQ(theirs["holding_1008"], "exception 2");
    EXPECT_EQ(theirs["plant_time"], "0 0"); // pymodbus read the plant time first ...
    ASSERT_TRUE(theirs.count("done"));
    const modbus_ptr ctx = libmodbus_connect(sim.port(), 1);
    ASSERT_TRUE(ctx);
    const auto t = read_regs(ctx.get(), 4, 0, 2);
    ASSERT_TRUE(t);
    EXPECT_EQ(u32_at(*t, 0), 60U); // ... so libmodbus sees the step after it
    EXPECT_EQ(sim.stop(), 0);
}

TEST(FlocsimServing, IllegalFunctionsAndAddressesGetTheSpecsExceptionCodes) {
    served sim{{"--scenario", scenario("marrowby"), "--port", "0", "--lockstep", "1min"}};
    ASSERT_NE(sim.port(), 0) << sim.proc().err();
    const modbus_ptr ctx = libmodbus_connect(sim.port(), 1);
    ASSERT_TRUE(ctx);
    modbus_t* c = ctx.get();
    // 02 illegal data address (AppSpec §7): start or start + quantity outside the map.
    errno = 0;
    EXPECT_FALSE(read_regs(c, 4, 40, 2));
    EXPECT_EQ(errno, EMBXILADD);
    errno = 0;
    EXPECT_FALSE(read_regs(c, 4, 38, 3));
    EXPECT_EQ(errno, EMBXILADD);
    errno = 0;
    EXPECT_FALSE(read_regs(c, 3, 1006, 4)); // 1008-1009 are not mapped
    EXPECT_EQ(errno, EMBXILADD);
    std::array<std::uint8_t, 2> bits{};
    errno = 0;
    EXPECT_EQ(modbus_read_input_bits(c, 0, 2, bits.data()), -1);
    EXPECT_EQ(errno, EMBXILADD);
    errno = 0;
    EXPECT_EQ(modbus_read_bits(c, 0, 1, bits.data()), -1); // no coils in Marrowby's map
    EXPECT_EQ(errno, EMBXILADD);
    // Writes: the read-only blower flags, half a float, an unmapped register, a coil: 02.
    for (const int address : {100, 1001, 1008}) {
        errno = 0;
        EXPECT_EQ(modbus_write_register(c, address, 1), -1) << address;
        EXPECT_EQ(errno, EMBXILADD) << address;
    }
    errno = 0;
    EXPECT_EQ(modbus_write_bit(c, 0, 1), -1);
    EXPECT_EQ(errno, EMBXILADD);
    // A set point that is not a number: 04 server device failure, nothing written.
    const auto nan = float_words(std::numeric_limits<float>::quiet_NaN());
    errno = 0;
    EXPECT_EQ(modbus_write_registers(c, 1000, 2, nan.data()), -1);
    EXPECT_EQ(errno, EMBXSFAIL);
    const auto back = read_regs(c, 3, 1000, 2);
    ASSERT_TRUE(back);
    EXPECT_EQ(float_at(*back, 0), 2.0F);
    // 01 illegal function: a code the server does not implement (0x41, user-defined range), and
    // serial-line-only diagnostics (0x08) and exception status (0x07) (AppSpec §5, §6).
    EXPECT_EQ(raw_request(c, {0x41, 0x00, 0x00}), (std::vector<std::uint8_t>{0xC1, 0x01}));
    EXPECT_EQ(raw_request(c, {0x08, 0x00, 0x00, 0x12, 0x34}),
              (std::vector<std::uint8_t>{0x88, 0x01}));
    EXPECT_EQ(raw_request(c, {0x07}), (std::vector<std::uint8_t>{0x87, 0x01}));
    // 03 illegal data value: 126 registers, over the limit of 125 (AppSpec §6.4).
    EXPECT_EQ(raw_request(c, {0x04, 0x00, 0x00, 0x00, 0x7E}),
              (std::vector<std::uint8_t>{0x84, 0x03}));
    // The plant is still there.
    EXPECT_TRUE(read_regs(c, 4, 0, 40));
    EXPECT_EQ(sim.stop(), 0);
}

TEST(FlocsimServing, ABenchWriteChangesThePlantsControlAndTheClientLogRecordsIt) {
    const fs::path dir = floc::sim::test::temp_dir("flocsim-serving");
    const fs::path log = dir / "clients.json";
    served sim{{"--scenario", scenario("marrowby"), "--port", "0", "--lockstep", "1min",
                "--client-log", log.string()}};
    ASSERT_NE(sim.port(), 0) << sim.proc().err();
    std::map<int, int> sent; // function code -> requests
    {
        const modbus_ptr ctx = libmodbus_connect(sim.port(), 1);
        ASSERT_TRUE(ctx);
        const auto before = read_regs(ctx.get(), 4, 0, 40);
        ++sent[4];
        ASSERT_TRUE(before);
        EXPECT_NEAR(float_at(*before, 6), 2.0, 0.3); // a_oxic1_do near its set point
        // a_oxic1's DO set point 2.0 -> 4.0 mg/L (function 16, float32 abcd at 1000-1001).
        const auto four = float_words(4.0F);
        ASSERT_EQ(modbus_write_registers(ctx.get(), 1000, 2, four.data()), 2);
        ++sent[16];
        const auto back = read_regs(ctx.get(), 3, 1000, 8);
        ++sent[3];
        ASSERT_TRUE(back);
        EXPECT_EQ(float_at(*back, 0), 4.0F);
        EXPECT_EQ(float_at(*back, 4), 2.0F); // b_oxic1 unchanged
        // 40 plant minutes on, the PLC's DO loop has taken the zone there; train B is as it was.
        std::optional<std::vector<std::uint16_t>> after;
        for (int i = 0; i < 40; ++i) {
            after = read_regs(ctx.get(), 4, 0, 40);
            ++sent[4];
            ASSERT_TRUE(after);
        }
        EXPECT_EQ(u32_at(*after, 0), 40U * 60U);
        EXPECT_NEAR(float_at(*after, 6), 4.0, 0.3);
        EXPECT_NEAR(float_at(*after, 26), 2.0, 0.3); // b_oxic1_do
    }
    EXPECT_EQ(sim.stop(), 0);
    EXPECT_NE(
        sim.proc().err().find("bench write from 127.0.0.1: holding registers 1000-1001 written"),
        std::string::npos)
        << sim.proc().err();
    const std::string json = slurp(log);
    const std::string expected = "{\"clients\":[{\"address\":\"127.0.0.1\",\"requests\":" +
                                 std::to_string(sent[3] + sent[4] + sent[16]) +
                                 ",\"writes\":1,\"by_function\":{\"3\":" + std::to_string(sent[3]) +
                                 ",\"4\":" + std::to_string(sent[4]) + ",\"16\":1}}]}\n";
    EXPECT_EQ(json, expected);
    EXPECT_FALSE(fs::exists(log.string() + ".tmp"));
    fs::remove_all(dir);
}

TEST(FlocsimServing, ForStopsTheRunAndTheTrendAndStatusFollowPlantTime) {
    const fs::path dir = floc::sim::test::temp_dir("flocsim-serving");
    const fs::path trend = dir / "trend.csv";
    const fs::path log = dir / "clients.json";
    served sim{{"--scenario", scenario("marrowby"), "--port", "0", "--fast", "--for", "6h",
                "--trend", trend.string(), "--trend-interval", "1h", "--status", "--client-log",
                log.string()}};
    ASSERT_NE(sim.port(), 0) << sim.proc().err();
    EXPECT_EQ(sim.proc().wait(120s), 0) << sim.proc().err();
    // One status line per plant hour on a pipe.
    for (const char* hour : {"day 0 00:00", "day 0 03:00", "day 0 06:00"}) {
        EXPECT_NE(sim.proc().err().find(std::string{"Marrowby WRW  "} + hour), std::string::npos)
            << hour << "\n"
            << sim.proc().err();
    }
    EXPECT_NE(sim.proc().err().find("faults: none"), std::string::npos);
    std::istringstream rows{slurp(trend)};
    std::string header;
    std::getline(rows, header);
    EXPECT_EQ(header.rfind("time[s],", 0), 0U);
    std::vector<std::string> times;
    for (std::string row; std::getline(rows, row);) {
        times.push_back(row.substr(0, row.find(',')));
    }
    EXPECT_EQ(times,
              (std::vector<std::string>{"0", "3600", "7200", "10800", "14400", "18000", "21600"}));
    EXPECT_EQ(slurp(log), "{\"clients\":[]}\n");
    fs::remove_all(dir);
}

TEST(FlocsimServing, TheFaultBenchShowsEachFaultOnTheWireAtItsTime) {
    served sim{{"--scenario", scenario("marrowby-faults"), "--port", "0", "--lockstep", "1min"}};
    ASSERT_NE(sim.port(), 0) << sim.proc().err();
    modbus_ptr ctx = libmodbus_connect(sim.port(), 1);
    ASSERT_TRUE(ctx);
    // One step: every input register of the SI block at one plant time.
    const auto step = [&]() { return read_regs(ctx.get(), 4, 0, 40); };
    std::map<std::uint32_t, std::vector<std::uint16_t>> at; // plant minute -> registers
    const auto step_to = [&](std::uint32_t minute) {
        while (true) {
            const auto w = step();
            if (!w) {
                return false;
            }
            const std::uint32_t m = u32_at(*w, 0) / 60U;
            at[m] = *w;
            if (m + 1 >= minute) {
                return true; // the plant is at `minute` now
            }
        }
    };
    const auto reconnect = [&](std::uint32_t timeout_ms) {
        ctx = libmodbus_connect(sim.port(), 1);
        if (ctx) {
            modbus_set_response_timeout(ctx.get(), timeout_ms / 1000U,
                                        (timeout_ms % 1000U) * 1000U);
        }
        return static_cast<bool>(ctx);
    };
    // Wait (bounded) until a fresh connection reads the plant time again; the plant moves on by
    // itself while the fault keeps every read of it from being answered.
    const auto wait_for_reads = [&]() -> std::optional<std::uint32_t> {
        for (int i = 0; i < 300; ++i) {
            if (reconnect(2000)) {
                if (const auto w = step()) {
                    return u32_at(*w, 0);
                }
            }
            std::this_thread::sleep_for(100ms);
            sim.drain();
        }
        return std::nullopt;
    };

    // Sensor faults, 0:00-1:00: a_oxic1_do (6-7) stuck 0:10-0:40, a_oxic2_nh4 (10-11) no
    // reading 0:30-0:45, a_anoxic_no3 (4-5) drifting 2 mg/L per hour from 0:20 (against the
    // same probe of the identical train B at 24-25).
    ASSERT_TRUE(step_to(60));
    EXPECT_NE(float_at(at[5], 6), float_at(at[9], 6)); // a live, noisy probe
    for (std::uint32_t m = 10; m < 40; ++m) {
        EXPECT_EQ(float_at(at[m], 6), float_at(at[10], 6)) << "minute " << m;
    }
    EXPECT_NE(float_at(at[40], 6), float_at(at[10], 6));
    EXPECT_TRUE(std::isfinite(float_at(at[29], 10)));
    for (std::uint32_t m = 30; m < 45; ++m) {
        EXPECT_TRUE(std::isnan(float_at(at[m], 10))) << "minute " << m;
    }
    EXPECT_TRUE(std::isfinite(float_at(at[45], 10)));
    EXPECT_LT(std::abs(float_at(at[19], 4) - float_at(at[19], 24)), 0.4);
    const double drift = float_at(at[59], 4) - float_at(at[59], 24); // 39 min x 2 mg/L/h = 1.3
    EXPECT_GT(drift, 0.9);
    EXPECT_LT(drift, 1.7);

    // 1:00-1:05 link loss: the connection is closed, new ones are refused.
    EXPECT_FALSE(step());
    EXPECT_EQ(connect_error(sim.port()), ECONNREFUSED);
    EXPECT_EQ(wait_for_reads(), 65U * 60U);

    // 1:15-1:20 slow replies: 1.5 s, beyond a 1 s timeout; a 3 s timeout gets them.
    ASSERT_TRUE(step_to(75));
    ASSERT_TRUE(reconnect(1000));
    errno = 0;
    EXPECT_FALSE(step());
    EXPECT_EQ(errno, ETIMEDOUT);
    ASSERT_TRUE(reconnect(3000));
    const auto slow = step();
    ASSERT_TRUE(slow) << modbus_strerror(errno);
    EXPECT_EQ(u32_at(*slow, 0), 76U * 60U); // the timed-out read was answered, late: one step
    ASSERT_TRUE(step_to(80));

    // 1:30-1:35 exception 04 to function 04; function 03 is still answered.
    ASSERT_TRUE(reconnect(2000));
    ASSERT_TRUE(step_to(90));
    errno = 0;
    EXPECT_FALSE(step());
    EXPECT_EQ(errno, EMBXSFAIL);
    const auto holding = read_regs(ctx.get(), 3, 1000, 2);
    ASSERT_TRUE(holding);
    EXPECT_EQ(float_at(*holding, 0), 2.0F);
    EXPECT_EQ(wait_for_reads(), 95U * 60U);

    // 1:45-1:50 wrong transaction id: libmodbus discards the replies (TCP guide V1.0b §4.4.1.3).
    ASSERT_TRUE(step_to(105));
    for (int i = 0; i < 5; ++i) {
        ASSERT_TRUE(reconnect(2000));
        errno = 0;
        EXPECT_FALSE(step()) << i;
        EXPECT_EQ(errno, EMBBADDATA) << i;
    }
    ASSERT_TRUE(reconnect(2000));
    const auto matched = step();
    ASSERT_TRUE(matched);
    EXPECT_EQ(u32_at(*matched, 0), 110U * 60U); // each read was done, only the id was wrong

    // 2:00-2:05 dropped connections: each request closes its connection.
    ASSERT_TRUE(step_to(120));
    errno = 0;
    EXPECT_FALSE(step());
    EXPECT_EQ(errno, ECONNRESET);
    ASSERT_TRUE(reconnect(2000));
    EXPECT_FALSE(step());
    EXPECT_EQ(wait_for_reads(), 125U * 60U);
    EXPECT_EQ(sim.stop(), 0);
}

// A floc advisory server for the operator stand-in: flocd's register map for the Marrowby example
// config, filled with a known advice, served by the project's server library on its own thread.
class fake_advisory_server {
public:
    fake_advisory_server() {
        auto r =
            floc::config::load_file((source_dir / "config/examples/marrowby-si.toml").string());
        if (!r.ok()) {
            return;
        }
        cfg_ = std::move(*r.config);
        map_ = floc::registers::build(cfg_);
        floc::registers::image img{map_, cfg_};
        floc::registers::status_info st;
        st.heartbeat = 7;
        st.state = floc::registers::daemon_state::running;
        img.put_status(st);
        const auto advise = [&](std::size_t slot, double value, std::uint16_t quality,
                                std::uint16_t reason) {
            img.put_advice(slot, floc::sim::test::published(value, quality, reason, 20.0));
        };
        advise(0, 2.6, 0, 20);   // aeration a_oxic1: good, ammonia above target
        advise(2, 2.9, 1, 2);    // aeration b_oxic1: held, not to be applied
        advise(4, 3.0, 0, 40);   // recycle A: 3 x flow
        advise(6, 0.8, 0, 60);   // RAS A: 0.8 x flow
        advise(8, 120.0, 0, 80); // waste A: 120 m3/d
        for (std::uint32_t a = 0; a < 65536; ++a) {
            bank_.registers(floc::modbus::table::holding_registers)[a] =
                img.at(static_cast<std::uint16_t>(a));
            bank_.registers(floc::modbus::table::input_registers)[a] =
                img.at(static_cast<std::uint16_t>(a));
        }
        server_ =
            std::make_unique<floc::modbus::server>(io_, bank_, floc::modbus::server_options{});
        if (server_->start()) {
            return;
        }
        thread_ = std::thread{[this] { io_.run(); }};
    }
    ~fake_advisory_server() { finish(); }
    fake_advisory_server(const fake_advisory_server&) = delete;
    fake_advisory_server& operator=(const fake_advisory_server&) = delete;

    [[nodiscard]] std::uint16_t port() const { return thread_.joinable() ? server_->port() : 0; }
    // Stops serving; afterwards the per-client record may be read.
    void finish() {
        if (thread_.joinable()) {
            boost::asio::post(io_, [this] { server_->stop(); });
            thread_.join();
        }
    }
    [[nodiscard]] const std::map<std::uint32_t, floc::modbus::client_record>& clients() const {
        return server_->clients();
    }

private:
    boost::asio::io_context io_;
    floc::config::plant_config cfg_;
    floc::registers::register_map map_;
    floc::modbus::register_bank bank_{{0, 0, 65536, 65536}};
    std::unique_ptr<floc::modbus::server> server_;
    std::thread thread_;
};

TEST(FlocsimServing, TheOperatorStandinReadsAdviceLikeAnHmiAndAppliesItAfterTheDelay) {
    fake_advisory_server flocd;
    ASSERT_NE(flocd.port(), 0);
    served sim{{"--scenario", scenario("marrowby"), "--port", "0", "--lockstep", "1min", "--hmi",
                "127.0.0.1:" + std::to_string(flocd.port()), "--hmi-config",
                (source_dir / "config/examples/marrowby-si.toml").string(), "--apply-advice",
                "30min", "--show-advice"}};
    ASSERT_NE(sim.port(), 0) << sim.proc().err();
    // The table, once the advice is read (at plant time 0: nothing has stepped the plant yet).
    const auto header = sim.proc().wait_for_line("flocd running, heartbeat 7", 30s);
    ASSERT_TRUE(header) << sim.proc().out() << sim.proc().err();
    const auto row = sim.proc().wait_for_line("aeration a_oxic1", 5s);
    ASSERT_TRUE(row);
    EXPECT_NE(row->find("2.60 mg/L"), std::string::npos) << *row;
    EXPECT_NE(row->find("good"), std::string::npos) << *row;
    EXPECT_NE(row->find("ammonia_above_target"), std::string::npos) << *row;
    EXPECT_NE(row->find("20 s"), std::string::npos) << *row;
    EXPECT_NE(row->find("due day 0 00:30:00"), std::string::npos) << *row;
    ASSERT_TRUE(sim.proc().wait_for_line("aeration b_oxic1", 5s));
    EXPECT_TRUE(sim.proc().wait_for_line("advisory only: a licensed operator decides", 5s));

    const modbus_ptr ctx = libmodbus_connect(sim.port(), 1);
    ASSERT_TRUE(ctx);
    const auto setpoints = [&]() {
        // 1000-1007, then 1010-1021 (1008-1009 are not mapped)
        std::vector<std::uint16_t> all(20, 0);
        EXPECT_EQ(modbus_read_registers(ctx.get(), 1000, 8, all.data()), 8);
        EXPECT_EQ(modbus_read_registers(ctx.get(), 1010, 12, all.data() + 8), 12);
        return all;
    };
    const std::vector<std::uint16_t> before = setpoints();
    // 29 plant minutes: not yet.
    for (int i = 0; i < 30; ++i) {
        ASSERT_TRUE(read_regs(ctx.get(), 4, 0, 2));
        if (i == 28) {
            EXPECT_EQ(setpoints(), before) << "applied before the acceptance delay";
        }
    }
    // At 30 min the good advice is in force.
    const auto flow = read_regs(ctx.get(), 4, 2, 2); // a_influent_flow, m3/d
    ASSERT_TRUE(flow);
    const double q_m3_per_h = static_cast<double>(float_at(*flow, 0)) / 24.0;
    const std::vector<std::uint16_t> after = setpoints();
    EXPECT_EQ(float_at(after, 0), 2.6F);                                  // a_oxic1 DO (mg/L)
    EXPECT_EQ(float_at(after, 2), float_at(before, 2));                   // a_oxic2: no advice
    EXPECT_EQ(float_at(after, 4), float_at(before, 4));                   // b_oxic1: held advice
    EXPECT_NEAR(float_at(after, 8), 0.8 * q_m3_per_h, 0.02 * q_m3_per_h); // RAS A at 1010 (m3/h)
    EXPECT_EQ(float_at(after, 10), float_at(before, 10));                 // RAS B
    EXPECT_NEAR(float_at(after, 12), 120.0, 1e-3);                        // WAS A at 1014 (m3/d)
    EXPECT_NEAR(float_at(after, 16), 3.0 * q_m3_per_h,
                0.02 * q_m3_per_h); // recycle A at 1018 (m3/h)
    EXPECT_TRUE(sim.proc().wait_for_line(
        "operator at day 0 00:30:00: a_oxic1 DO set point 2.60 mg/L", 10s, true))
        << sim.proc().err();
    EXPECT_EQ(sim.stop(), 0);

    // The stand-in read with function 03 only, and wrote nothing.
    flocd.finish();
    ASSERT_EQ(flocd.clients().size(), 1U);
    const floc::modbus::client_record& r = flocd.clients().begin()->second;
    EXPECT_GT(r.total(), 0U);
    EXPECT_EQ(r.by_function.at(3), r.total());
    EXPECT_EQ(r.writes(), 0U);
}

TEST(FlocsimServing, TheOperatorStandinWaitsQuietlyForFlocd) {
    // Nothing listens on the port: the table says so and flocsim keeps serving.
    served sim{{"--scenario", scenario("carrick-fen"), "--port", "0", "--lockstep", "1min", "--hmi",
                "127.0.0.1:1", "--hmi-config",
                (source_dir / "config/examples/marrowby-si.toml").string(), "--show-advice"}};
    ASSERT_NE(sim.port(), 0) << sim.proc().err();
    EXPECT_TRUE(sim.proc().wait_for_line("waiting for flocd", 30s));
    EXPECT_TRUE(sim.proc().wait_for_line("no zone a_oxic1 in this scenario", 5s));
    const modbus_ptr ctx = libmodbus_connect(sim.port(), 1);
    ASSERT_TRUE(ctx);
    EXPECT_TRUE(read_regs(ctx.get(), 4, 0, 2));
    EXPECT_EQ(sim.stop(), 0);
}

} // namespace
