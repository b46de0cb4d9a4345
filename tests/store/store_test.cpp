// Crash-safe files and the journal.
#include "floc/store/files.hpp"
#include "floc/store/journal.hpp"
#include "floc/store/json.hpp"
#include "floc/store/state_file.hpp"
#include "process.hpp"

#include <gtest/gtest.h>

#include <csignal>
#include <filesystem>
#include <fstream>
#include <random>
#include <thread>

namespace {

namespace fs = std::filesystem;
using namespace floc;

fs::path fresh_dir(const std::string& name) {
    const fs::path d = fs::temp_directory_path() / ("floc-store-test-" + name + "-" + std::to_string(::getpid()));
    fs::remove_all(d);
    fs::create_directories(d);
    return d;
}

TEST(Json, EscapesAndNumbers) {
    store::json_object o;
    o.add("s", "a\"b\\c\n\x01").add("n", 0.1).add("i", 42).add("nan", std::nan("")).add("t", true);
    EXPECT_EQ(o.str(), R"({"s":"a\"b\\c\n\u0001","n":0.1,"i":42,"nan":null,"t":true})");
    store::json_object inner;
    inner.add("v", 2.5);
    store::json_object outer;
    outer.add("inner", inner).add("list", std::vector<double>{1.0, 2.5}).add("objs", std::vector<store::json_object>{inner, inner});
    EXPECT_EQ(outer.str(), R"({"inner":{"v":2.5},"list":[1,2.5],"objs":[{"v":2.5},{"v":2.5}]})");
    EXPECT_EQ(store::json_number(1e-300), "1e-300");
    EXPECT_EQ(store::json_number(-INFINITY), "null");
}

TEST(AtomicWrite, ReplacesAndReadsBack) {
    const fs::path dir = fresh_dir("replace");
    const fs::path f = dir / "state.toml";
    ASSERT_FALSE(store::atomic_write(f, "one"));
    ASSERT_FALSE(store::atomic_write(f, "two"));
    std::error_code ec;
    EXPECT_EQ(store::read_whole(f, ec).value_or(""), "two");
    // no temporary files left behind
    std::size_t n = 0;
    for ([[maybe_unused]] const auto& e : fs::directory_iterator(dir)) {
        ++n;
    }
    EXPECT_EQ(n, 1U);
    EXPECT_FALSE(store::read_whole(dir / "missing", ec).has_value());
    EXPECT_TRUE(ec);
    fs::remove_all(dir);
}

TEST(AtomicWrite, UnwritableDirectoryIsAnError) {
    EXPECT_TRUE(store::atomic_write("/nonexistent-dir/state.toml", "x"));
}

// kill -9 at random moments while a child rewrites the file: whatever is on disk afterwards is
// one complete version, never a torn one.
TEST(AtomicWrite, SurvivesKillNineManyTimes) {
    const fs::path dir = fresh_dir("kill");
    const fs::path f = dir / "state.bin";
    std::mt19937 rng{20261201U};
    std::uniform_int_distribution<int> delay_ms{1, 40};
    {
        // A first version on disk, however slowly the child starts (sanitizers, a loaded
        // machine): from then on every round must find one complete version, old or new.
        test::background_process child{{WRITER_CHILD, f.string()}};
        for (int i = 0; i < 1000 && !fs::exists(f); ++i) {
            std::this_thread::sleep_for(std::chrono::milliseconds{10});
        }
        child.signal(SIGKILL);
        ASSERT_TRUE(child.wait(std::chrono::seconds{10}).has_value());
        ASSERT_TRUE(fs::exists(f));
    }
    int complete_versions = 0;
    for (int round = 0; round < 40; ++round) {
        test::background_process child{{WRITER_CHILD, f.string()}};
        std::this_thread::sleep_for(std::chrono::milliseconds{delay_ms(rng)});
        child.signal(SIGKILL);
        ASSERT_TRUE(child.wait(std::chrono::seconds{10}).has_value());
        std::error_code ec;
        const auto text = store::read_whole(f, ec);
        ASSERT_TRUE(text.has_value()) << "round " << round << ": the file is gone";
        const std::size_t nl = text->find('\n');
        ASSERT_NE(nl, std::string::npos) << "round " << round;
        const std::string head = text->substr(0, nl);
        ASSERT_EQ(head.rfind("begin ", 0), 0U) << "round " << round;
        const std::string n = head.substr(6);
        const std::string tail = "\nend " + n + "\n";
        ASSERT_EQ(text->size(), nl + 1 + 256U * 1024U + tail.size()) << "round " << round;
        ASSERT_EQ(text->substr(text->size() - tail.size()), tail) << "round " << round;
        ++complete_versions;
    }
    EXPECT_EQ(complete_versions, 40);
    fs::remove_all(dir);
}

TEST(Journal, AppendsLinesAndRotates) {
    const fs::path dir = fresh_dir("journal");
    const fs::path f = dir / "advice-journal.jsonl";
    {
        store::journal j{f, 200, 2};
        for (int i = 0; i < 10; ++i) {
            store::json_object line;
            line.add("seq", i).add("text", std::string(40, 'x'));
            ASSERT_FALSE(j.append(line));
        }
    }
    ASSERT_TRUE(fs::exists(f));
    ASSERT_TRUE(fs::exists(dir / "advice-journal.jsonl.1"));
    ASSERT_TRUE(fs::exists(dir / "advice-journal.jsonl.2"));
    EXPECT_FALSE(fs::exists(dir / "advice-journal.jsonl.3"));
    EXPECT_LE(fs::file_size(f), 200U);
    // The newest line is last in the current file; each line is whole JSON.
    std::ifstream in(f);
    std::string line;
    std::string last;
    while (std::getline(in, line)) {
        EXPECT_EQ(line.front(), '{');
        EXPECT_EQ(line.back(), '}');
        last = line;
    }
    EXPECT_NE(last.find("\"seq\":9"), std::string::npos);
    fs::remove_all(dir);
}

TEST(Journal, ReopensAndContinues) {
    const fs::path dir = fresh_dir("reopen");
    const fs::path f = dir / "j.jsonl";
    for (int i = 0; i < 3; ++i) {
        store::journal j{f};
        store::json_object line;
        line.add("run", i);
        ASSERT_FALSE(j.append(line));
    }
    std::error_code ec;
    EXPECT_EQ(store::read_whole(f, ec).value_or(""), "{\"run\":0}\n{\"run\":1}\n{\"run\":2}\n");
    fs::remove_all(dir);
}

TEST(StateFile, RoundTrip) {
    store::state_document doc;
    doc.sections["lab.a_mlss"]["value"] = 3200.0;
    doc.sections["lab.a_mlss"]["entered_by"] = std::string{"127.0.0.1"};
    doc.sections["advisor.waste.A"]["daily_mlss"] = std::vector<double>{3000.0, 3100.5, 2990.25};
    doc.sections["advisor.waste.A"]["integral"] = std::nan("");
    doc.sections["advisor.aeration.a_oxic1"]["last"] = -INFINITY;
    const std::string text = store::to_text(doc);
    const auto parsed = store::parse_state(text, "state.toml");
    ASSERT_TRUE(std::holds_alternative<store::state_document>(parsed)) << std::get<std::string>(parsed);
    const auto& back = std::get<store::state_document>(parsed);
    EXPECT_DOUBLE_EQ(back.number("lab.a_mlss", "value", 0.0), 3200.0);
    EXPECT_EQ(back.text("lab.a_mlss", "entered_by"), "127.0.0.1");
    EXPECT_EQ(back.numbers("advisor.waste.A", "daily_mlss"), (std::vector<double>{3000.0, 3100.5, 2990.25}));
    EXPECT_TRUE(std::isnan(back.number("advisor.waste.A", "integral", 0.0)));
    EXPECT_EQ(back.number("advisor.aeration.a_oxic1", "last", 0.0), -INFINITY);
    EXPECT_DOUBLE_EQ(back.number("nothing", "here", 7.0), 7.0);
}

TEST(StateFile, ErrorsNameThePosition) {
    const auto bad = store::parse_state("state_format = 1\n[section.x\n", "s.toml");
    ASSERT_TRUE(std::holds_alternative<std::string>(bad));
    EXPECT_EQ(std::get<std::string>(bad).rfind("s.toml:2:", 0), 0U) << std::get<std::string>(bad);
    const auto old = store::parse_state("state_format = 9\n", "s.toml");
    ASSERT_TRUE(std::holds_alternative<std::string>(old));
    EXPECT_NE(std::get<std::string>(old).find("expected 1"), std::string::npos);
}

} // namespace
