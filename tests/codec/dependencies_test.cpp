// The dependency rules of the Modbus targets, checked on the sources: the codec is pure (no
// sockets, Asio, threads, clocks, files or logging) and neither the codec nor the server uses
// libmodbus, which is only a peer in tests.
#include <gtest/gtest.h>

#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

namespace {

namespace fs = std::filesystem;

const fs::path source_dir{FLOC_SOURCE_DIR};

// "file:line: text" for every #include line under `dir` that names one of `forbidden`.
std::vector<std::string> includes_of(const fs::path& dir,
                                     const std::vector<std::string>& forbidden) {
    std::vector<std::string> found;
    for (const auto& entry : fs::recursive_directory_iterator(dir)) {
        if (!entry.is_regular_file()) {
            continue;
        }
        std::ifstream in{entry.path()};
        int line_no = 0;
        for (std::string line; std::getline(in, line);) {
            ++line_no;
            if (line.rfind("#include", 0) != 0) {
                continue;
            }
            for (const std::string& f : forbidden) {
                if (line.find(f) != std::string::npos) {
                    found.push_back(entry.path().lexically_relative(source_dir).string() + ":" +
                                    std::to_string(line_no) + ": " + line);
                }
            }
        }
    }
    return found;
}

std::string read(const fs::path& file) {
    std::ifstream in{file};
    std::ostringstream s;
    s << in.rdbuf();
    return s.str();
}

TEST(Dependencies, CodecIsPure) {
    const auto found = includes_of(source_dir / "daemon/codec",
                                   {"boost/", "asio", "sys/socket", "netinet", "arpa/", "unistd",
                                    "modbus.h", "spdlog", "<thread>", "<mutex>", "<chrono>",
                                    "<fstream>", "<iostream>", "<cstdio>"});
    EXPECT_TRUE(found.empty()) << ::testing::PrintToString(found);
}

TEST(Dependencies, ServerDoesNotUseLibmodbus) {
    const auto found = includes_of(source_dir / "daemon/server", {"modbus.h", "spdlog"});
    EXPECT_TRUE(found.empty()) << ::testing::PrintToString(found);
    for (const char* cmake : {"daemon/codec/CMakeLists.txt", "daemon/server/CMakeLists.txt"}) {
        const std::string text = read(source_dir / cmake);
        ASSERT_FALSE(text.empty()) << cmake;
        EXPECT_EQ(text.find("MODBUS"), std::string::npos) << cmake << " links libmodbus";
    }
}

TEST(Dependencies, ServerHeaderKeepsAsioOut) {
    // server.hpp forward-declares io_context; Asio's headers stay in the sources and in the
    // opt-in floc/modbus/asio.hpp.
    const std::string header = read(source_dir / "daemon/server/include/floc/modbus/server.hpp");
    ASSERT_FALSE(header.empty());
    EXPECT_EQ(header.find("#include <boost"), std::string::npos);
}

} // namespace
