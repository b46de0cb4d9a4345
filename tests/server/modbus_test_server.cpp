// modbus_test_server: serves a fixed register bank on 127.0.0.1 for the interop tests, so that
// independent clients (pymodbus, mbpoll, libmodbus, tshark's dissector) talk to a real process.
//
//   modbus_test_server [--time-limit SECONDS]
//
// Listens on a free port of 127.0.0.1 and prints "port N" on stdout. Stops on SIGTERM or
// SIGINT, when its standard input closes, or after the time limit (default 120 s; exit 1).
// On a clean stop it prints, for each client address, the requests it sent by function code.
// For tests only: it listens on loopback and must never face a plant network.
#include "test_bank.hpp"

#include "floc/modbus/asio.hpp"
#include "floc/modbus/register_bank.hpp"
#include "floc/modbus/server.hpp"

#include <unistd.h>

#include <array>
#include <csignal>
#include <cstdio>
#include <cstdlib>
#include <functional>
#include <iostream>
#include <string>
#include <string_view>

namespace {

using namespace floc::modbus;

constexpr std::uint32_t table_size = 200;

// The bank the interop tests expect: the test pattern, holding registers 180..199 and coils
// 190..199 read-only (exception 02).
void fill(register_bank& bank) {
    floc::modbus::test::fill_test_pattern(bank);
    bank.protect(table::holding_registers, 180, 20);
    bank.protect(table::coils, 190, 10);
}

std::string dotted(std::uint32_t a) {
    return std::to_string(a >> 24U) + "." + std::to_string((a >> 16U) & 0xFFU) + "." +
           std::to_string((a >> 8U) & 0xFFU) + "." + std::to_string(a & 0xFFU);
}

int usage(std::string_view why) {
    std::cerr << "modbus_test_server: " << why
              << "\nusage: modbus_test_server [--time-limit SECONDS]\n";
    return 64;
}

int run(int argc, char** argv) {
    long limit_s = 120;
    for (int i = 1; i < argc; ++i) {
        const std::string_view arg = argv[i];
        if (arg == "--time-limit" && i + 1 < argc) {
            char* end = nullptr;
            limit_s = std::strtol(argv[++i], &end, 10);
            if (end == nullptr || *end != '\0' || limit_s < 1 || limit_s > 3600) {
                return usage("--time-limit takes whole seconds from 1 to 3600");
            }
        } else {
            return usage("unknown argument '" + std::string{arg} + "'");
        }
    }

    register_bank bank{bank_sizes{table_size, table_size, table_size, table_size}};
    fill(bank);

    boost::asio::io_context io;
    server_options options;
    options.address = "127.0.0.1";
    options.port = 0;
    options.identity.vendor_name = "floc project";
    options.identity.product_code = "FLOCTEST";
    options.identity.revision = "0.1";
    options.identity.product_name = "floc Modbus/TCP test server";
    options.identity.model_name = "loopback";
    server srv{io, bank, options};
    if (const auto why = srv.start()) {
        std::cerr << "modbus_test_server: " << *why << "\n";
        return 71;
    }
    std::cout << "port " << srv.port() << std::endl;

    int exit_code = 0;
    boost::asio::signal_set signals{io, SIGTERM, SIGINT};
    boost::asio::steady_timer limit{io, std::chrono::seconds{limit_s}};
    boost::asio::posix::stream_descriptor input{io, ::dup(STDIN_FILENO)};
    std::array<char, 64> sink{};
    const auto stop_all = [&] {
        srv.stop();
        signals.cancel();
        limit.cancel();
        input.close();
    };
    signals.async_wait([&](const boost::system::error_code& ec, int /*signal*/) {
        if (!ec) {
            stop_all();
        }
    });
    limit.async_wait([&](const boost::system::error_code& ec) {
        if (!ec) {
            std::cerr << "modbus_test_server: time limit of " << limit_s << " s reached\n";
            exit_code = 1;
            stop_all();
        }
    });
    // Standard input closing (the test that started us is done, or died) stops the server.
    std::function<void()> watch_input = [&] {
        input.async_read_some(boost::asio::buffer(sink),
                              [&](const boost::system::error_code& ec, std::size_t /*n*/) {
                                  if (!ec) {
                                      watch_input();
                                  } else if (ec != boost::asio::error::operation_aborted) {
                                      stop_all();
                                  }
                              });
    };
    watch_input();
    io.run();

    const server_statistics& s = srv.statistics();
    std::cout << "requests " << s.requests << " exceptions " << s.exception_replies << " discarded "
              << s.discarded_frames << " malformed " << s.malformed_frames << "\n";
    for (const auto& [address, record] : srv.clients()) {
        for (std::size_t fc = 0; fc < record.by_function.size(); ++fc) {
            if (record.by_function.at(fc) > 0) {
                std::cout << "client " << dotted(address) << " function " << fc << " requests "
                          << record.by_function.at(fc) << "\n";
            }
        }
    }
    return exit_code;
}

} // namespace

int main(int argc, char** argv) {
    try {
        return run(argc, argv);
    } catch (const std::exception& e) { // Asio's constructors throw on system errors
        std::cerr << "modbus_test_server: " << e.what() << "\n";
        return 70;
    }
}
