// flocd's command line, run as a real process.
#include "process.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <filesystem>
#include <fstream>
#include <regex>
#include <sstream>

namespace {

namespace fs = std::filesystem;
using floc::test::run_process;

const fs::path source_dir{FLOC_SOURCE_DIR};
const std::string flocd{FLOCD_PATH};

TEST(FlocdCli, HelpCarriesTheCautions) {
    const auto r = run_process({flocd, "--help"});
    EXPECT_EQ(r.exit_code, 0);
    EXPECT_NE(r.out.find("--check-config"), std::string::npos);
    EXPECT_NE(r.out.find("advisory only"), std::string::npos);
    EXPECT_NE(r.out.find("licensed operator"), std::string::npos);
    EXPECT_NE(r.out.find("local"), std::string::npos);
    EXPECT_NE(r.out.find("Never point the simulator"), std::string::npos);
}

TEST(FlocdCli, Version) {
    const auto r = run_process({flocd, "--version"});
    EXPECT_EQ(r.exit_code, 0);
    EXPECT_EQ(r.out.rfind("flocd ", 0), 0U);
}

TEST(FlocdCli, UsageErrorsExit64) {
    EXPECT_EQ(run_process({flocd, "--bogus"}).exit_code, 64);
    EXPECT_EQ(run_process({flocd, "--check-config"}).exit_code, 64);
}

TEST(FlocdCli, CheckConfigAcceptsEveryExample) {
    std::size_t n = 0;
    for (const auto& entry : fs::directory_iterator(source_dir / "config/examples")) {
        if (entry.path().extension() != ".toml") {
            continue;
        }
        ++n;
        const auto r = run_process({flocd, "--check-config", entry.path().string()});
        EXPECT_EQ(r.exit_code, 0) << entry.path() << "\n" << r.err;
        EXPECT_NE(r.out.find("config OK"), std::string::npos) << r.out;
        EXPECT_NE(r.out.find("Marrowby WRW"), std::string::npos) << r.out;
        EXPECT_NE(r.out.find("(read only)"), std::string::npos) << r.out;
    }
    EXPECT_GE(n, 2U);
}

TEST(FlocdCli, ServiceWithoutItsConfigExits66) {
    const auto r = run_process({flocd, "--config", "/nonexistent/flocd.toml", "--once"});
    EXPECT_EQ(r.exit_code, 66);
    EXPECT_NE(r.err.find("/nonexistent/flocd.toml"), std::string::npos) << r.err;
}

TEST(FlocdCli, CheckConfigMissingFileExits66) {
    const auto r = run_process({flocd, "--check-config", "/nonexistent/floc.toml"});
    EXPECT_EQ(r.exit_code, 66);
    EXPECT_NE(r.err.find("/nonexistent/floc.toml"), std::string::npos);
}

// Each broken config exits 78, and every announced error appears on stderr as
// "FILE:LINE:COL: KEY.PATH: ...".
TEST(FlocdCli, CheckConfigRefusesEveryBrokenConfig) {
    static const std::regex expect_line{R"(^# expect: (\d+):(\d+) (\S*) \| (.+)$)"};
    std::size_t files = 0;
    for (const auto& entry : fs::directory_iterator(source_dir / "tests/config/broken")) {
        if (entry.path().extension() != ".toml") {
            continue;
        }
        ++files;
        const std::string path = entry.path().string();
        const auto r = run_process({flocd, "--check-config", path});
        EXPECT_EQ(r.exit_code, 78) << path << "\n" << r.out << r.err;
        EXPECT_NE(r.err.find("the config is invalid"), std::string::npos) << r.err;

        std::ifstream in(entry.path());
        std::string line;
        std::size_t announced = 0;
        while (std::getline(in, line)) {
            std::smatch m;
            if (!std::regex_match(line, m, expect_line)) {
                continue;
            }
            ++announced;
            std::string head = path + ":" + std::string{m[1]} + ":" + std::string{m[2]} + ": ";
            if (m[3] != "-") {
                head += std::string{m[3]} + ": ";
            }
            EXPECT_NE(r.err.find(head), std::string::npos) << "missing '" << head << "' in\n" << r.err;
            EXPECT_NE(r.err.find(std::string{m[4]}), std::string::npos) << r.err;
        }
        EXPECT_GT(announced, 0U) << path;
    }
    EXPECT_GE(files, 12U);
}

// The register map shipped in the source tree is what flocd prints for the demo config.
TEST(FlocdCli, RegisterMapDocumentMatchesTheDemoConfig) {
    const auto r = run_process({flocd, "--config", (source_dir / "config/examples/marrowby-si.toml").string(),
                                "--register-map", "--format", "md"});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    std::ifstream in(source_dir / "daemon/registers/register-map.md");
    std::ostringstream doc;
    doc << in.rdbuf();
    EXPECT_EQ(r.out, doc.str()) << "regenerate daemon/registers/register-map.md with\n"
                                   "  flocd --config config/examples/marrowby-si.toml --register-map --format md";
    EXPECT_NE(r.out.find("advisory only"), std::string::npos);
    const auto csv = run_process({flocd, "--config", (source_dir / "config/examples/marrowby-us.toml").string(),
                                  "--register-map", "--format", "csv"});
    ASSERT_EQ(csv.exit_code, 0) << csv.err;
    EXPECT_EQ(csv.out.rfind("address,registers,type,access,unit,scale,name,meaning\n", 0), 0U);
    EXPECT_NE(csv.out.find(",gpm,"), std::string::npos);
}

} // namespace
