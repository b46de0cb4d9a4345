// flocd against flocsim's fault bench (sim_plant/scenarios/marrowby-faults.toml, in lockstep: one
// plant minute per poll): each sensor and protocol fault shows on flocd's registers with the
// right quality and reason within two poll periods of its start (the frozen probe: once it has
// been still for frozen_after), and every input recovers when the fault clears. The drifting
// nitrate probe, which no check of one tag can tell from the process, is caught by a check
// reading the test enters as an operator would (a grab sample, on the lab entry
// a_anoxic_no3_check) and cleared by the next check after the drift has ended.
#include "harness.hpp"

#include "floc/config/load.hpp"
#include "floc/registers/register_map.hpp"
#include "floc/store/files.hpp"

#include <algorithm>
#include <cmath>

#include <gtest/gtest.h>

namespace {

using namespace floc;
using namespace std::chrono_literals;
using test::modbus_client;

constexpr std::size_t a_anoxic_no3 = 2;  // tag indices in marrowby-si.toml (checked in SetUp)
constexpr std::size_t a_oxic1_do = 3;
constexpr std::size_t a_oxic2_nh4 = 5;
constexpr std::uint16_t good = 0, uncertain = 1, bad = 2;
constexpr std::uint16_t reason_ok = 0, read_failed = 2, not_a_number = 3, frozen = 7, check_disagrees = 9;
constexpr std::size_t recycle_a = 4;  // advice slots: four aeration advisors, then recycle A
constexpr std::uint16_t advice_held = 1, advice_fallback = 2;
// The scenario's drift of a_anoxic_no3: 2 mg/L per hour from plant minute 20 to 80.
constexpr double drift_per_minute = 2.0 / 60.0, drift_from_min = 20.0;

// Two poll periods (1 s each), plus room for a loaded machine.
constexpr auto two_polls = 4s;

class fault_bench : public testing::Test {
protected:
    void SetUp() override {
        plant = std::make_unique<test::simulated_plant>(dir, "marrowby-faults.toml",
                                                        std::vector<std::string>{"--lockstep", "1min"});
        hmi_port = test::free_port();
        config = test::write_flocd_config(dir, "marrowby-si.toml", plant->port(), hmi_port, [](std::string& t) {
            // a_oxic1_do is the first tag with frozen_after = "1 h": flag it after 8 s (8 polls)
            const std::string frozen_from = "frozen_after = \"1 h\"";
            t.replace(t.find(frozen_from), frozen_from.size(), "frozen_after = \"8 s\"");
            const std::string backoff = "reconnect_max = \"1 min\"";
            t.replace(t.find(backoff), backoff.size(), "reconnect_max = \"2 s\"");
        });
        auto r = config::load_file(config);
        ASSERT_TRUE(r.ok());
        map = registers::build(*r.config);
        ASSERT_EQ(r.config->tags.at(a_anoxic_no3).name, "a_anoxic_no3");
        ASSERT_EQ(r.config->tags.at(a_oxic1_do).name, "a_oxic1_do");
        ASSERT_EQ(r.config->tags.at(a_oxic2_nh4).name, "a_oxic2_nh4");
        const config::lab_entry* check = r.config->find_lab("a_anoxic_no3_check");
        ASSERT_NE(check, nullptr);
        ASSERT_TRUE(check->check && check->check->tag.index == a_anoxic_no3);
        ASSERT_DOUBLE_EQ(check->check->tolerance, 1.0);
        check_entry = static_cast<std::size_t>(check - r.config->lab.data());
        daemon = std::make_unique<test::advisory_daemon>(dir, config, hmi_port);
        ASSERT_TRUE(daemon->wait_ready()) << daemon->log();
        hmi = std::make_unique<modbus_client>(hmi_port);
        ASSERT_TRUE(hmi->connected());
    }

    // flocd's plant time in minutes (from the PLC's time tag; it stops while reads fail).
    double plant_minutes() {
        const auto w = hmi->holding(registers::status_offset::plant_time_s, 2);
        return w.size() == 2 ? static_cast<double>((std::uint32_t{w[0]} << 16U) | w[1]) / 60.0 : -1.0;
    }
    bool wait_plant(double minutes, std::chrono::milliseconds limit = 120s) {
        return test::wait_for([&] { return plant_minutes() >= minutes; }, limit, 100ms);
    }
    std::pair<std::uint16_t, std::uint16_t> input(std::size_t tag) {
        const auto w = hmi->holding(map.input_base(tag) + registers::input_offset::quality, 2);
        return w.size() == 2 ? std::pair{w[0], w[1]} : std::pair<std::uint16_t, std::uint16_t>{99, 99};
    }
    bool wait_input(std::size_t tag, std::uint16_t q, std::uint16_t why, std::chrono::milliseconds limit) {
        return test::wait_for([&] { return input(tag) == std::pair{q, why}; }, limit, 100ms);
    }
    bool wait_read_failed(std::chrono::milliseconds limit, std::size_t tag = a_anoxic_no3) {
        return test::wait_for([&] {
            const auto [q, why] = input(tag);
            return why == read_failed && (q == uncertain || q == bad);
        }, limit, 100ms);
    }
    double input_value(std::size_t tag) {
        const auto w = hmi->holding(map.input_base(tag) + registers::input_offset::value, 2);
        return w.size() == 2 ? static_cast<double>(test::f32(w, 0)) : std::nan("");
    }
    // Enters a check reading (mg/L, taken now) on the lab entry, as the HMI would; true when
    // accepted.
    bool enter_check(double mg_per_l) {
        const std::uint16_t slot = map.lab_base(check_entry);
        return hmi->write_registers(slot, test::words_of(static_cast<float>(mg_per_l))) == 0 &&
               hmi->holding(slot + registers::lab_offset::status, 1).at(0) == 1;
    }
    std::uint16_t advice_quality(std::size_t slot) {
        return hmi->holding(map.advice_base(slot) + registers::advice_offset::quality, 1).at(0);
    }
    std::uint16_t status(std::uint16_t offset) { return hmi->holding(offset, 1).at(0); }
    bool advice_has_reason(std::size_t slot, std::uint16_t code) {
        const auto w = hmi->holding(map.advice_base(slot) + registers::advice_offset::reason_1, 4);
        return std::find(w.begin(), w.end(), code) != w.end();
    }

    test::scratch_dir dir{"faults"};
    std::unique_ptr<test::simulated_plant> plant;
    std::uint16_t hmi_port = 0;
    std::string config;
    registers::register_map map;
    std::size_t check_entry = 0;
    std::unique_ptr<test::advisory_daemon> daemon;
    std::unique_ptr<modbus_client> hmi;
};

TEST_F(fault_bench, EveryFaultShowsAndClears) {
    ASSERT_TRUE(wait_plant(5.0)) << daemon->log();
    EXPECT_EQ(input(a_oxic1_do), (std::pair{good, reason_ok}));
    EXPECT_EQ(input(a_oxic2_nh4), (std::pair{good, reason_ok}));

    // 0:10-0:40 a_oxic1_do stuck: frozen once still for frozen_after (8 polls), before it clears.
    ASSERT_TRUE(wait_plant(10.0));
    EXPECT_TRUE(wait_input(a_oxic1_do, bad, frozen, 8s + two_polls)) << "at plant minute " << plant_minutes();
    EXPECT_LT(plant_minutes(), 40.0);

    // 0:30-0:45 a_oxic2_nh4 drops out (NaN): not a number within two polls; the DO advice of
    // zone a_oxic2 (mode auto, ammonia from a_oxic2_nh4; its own DO probe is sound, unlike
    // a_oxic1's, which is stuck now) turns to the nitrate/DO rules.
    ASSERT_TRUE(wait_plant(30.0));
    EXPECT_TRUE(wait_input(a_oxic2_nh4, bad, not_a_number, two_polls)) << "at plant minute " << plant_minutes();
    EXPECT_TRUE(test::wait_for([&] { return advice_has_reason(1, 24); }, two_polls));  // rules_instead_of_ammonia

    // The stuck probe moves again after 0:40, the ammonium probe reads again after 0:45.
    ASSERT_TRUE(wait_plant(47.0));
    EXPECT_TRUE(wait_input(a_oxic1_do, good, reason_ok, two_polls));
    EXPECT_TRUE(wait_input(a_oxic2_nh4, good, reason_ok, two_polls));

    // 0:20-1:20 a_anoxic_no3 drifts upwards: one probe cannot tell a slow drift from the
    // process, so the value stays good; the check reading is the defence (below).
    EXPECT_EQ(input(a_anoxic_no3).first, good);

    // 1:00-1:05 PLC link loss: read failures at once, the daemon says the PLC is down, then the
    // link comes back.
    ASSERT_TRUE(wait_plant(59.0));
    EXPECT_TRUE(wait_read_failed(two_polls + 2s)) << "at plant minute " << plant_minutes();
    EXPECT_TRUE(test::wait_for([&] { return status(registers::status_offset::plc_link) == 0; }, two_polls));
    EXPECT_EQ(status(registers::status_offset::daemon_state), 3);
    EXPECT_TRUE(test::wait_for([&] { return status(registers::status_offset::plc_link) == 1; }, 20s)) << daemon->log();
    EXPECT_TRUE(wait_input(a_anoxic_no3, good, reason_ok, 10s));

    // From 1:06 the drift is over 1.5 mg/L. A grab sample finds the true nitrate: what the
    // probe shows less the scenario's drift. With the check's 1 mg/L tolerance the probe turns
    // bad (check disagrees) within two polls, and the recycle advice of train A, which uses
    // it, holds its last good value (and would fall back after hold_for, 30 min).
    ASSERT_TRUE(wait_plant(66.0));
    const double at_min = plant_minutes();
    const double shown = input_value(a_anoxic_no3);
    const double grab = shown - drift_per_minute * (at_min - drift_from_min);
    ASSERT_TRUE(std::isfinite(grab) && grab > 0.0) << shown;
    ASSERT_TRUE(enter_check(grab)) << "at plant minute " << at_min;
    EXPECT_TRUE(wait_input(a_anoxic_no3, bad, check_disagrees, two_polls))
        << "probe " << shown << " mg/L, check " << grab << " mg/L at plant minute " << at_min << "\n"
        << daemon->log();
    // The recycle advisor runs every 5 plant minutes (5 polls).
    EXPECT_TRUE(test::wait_for([&] {
        const std::uint16_t q = advice_quality(recycle_a);
        return q == advice_held || q == advice_fallback;
    }, 5s + two_polls)) << "at plant minute " << plant_minutes();
    EXPECT_TRUE(advice_has_reason(recycle_a, 1));  // input_bad

    // 1:15-1:20 replies 1.5 s late, beyond the 1 s response timeout. The nitrate probe stays
    // bad on its check meanwhile, so the ammonium probe shows the read failures.
    ASSERT_TRUE(wait_plant(74.0));
    EXPECT_TRUE(wait_read_failed(two_polls + 2s, a_oxic2_nh4)) << "at plant minute " << plant_minutes();
    EXPECT_TRUE(wait_input(a_oxic2_nh4, good, reason_ok, 30s)) << daemon->log();
    EXPECT_EQ(input(a_anoxic_no3), (std::pair{bad, check_disagrees}));

    // The drift ends at 1:20 (in the field: the probe is cleaned and recalibrated). The next
    // grab sample agrees with the probe and clears it within two polls.
    ASSERT_TRUE(wait_plant(84.0));
    const double after = input_value(a_anoxic_no3);
    ASSERT_TRUE(enter_check(after)) << "at plant minute " << plant_minutes();
    EXPECT_TRUE(wait_input(a_anoxic_no3, good, reason_ok, two_polls)) << "check " << after << " mg/L";

    // 1:30-1:35 function 04 answered with exception 04: read failures, the connection stays.
    ASSERT_TRUE(wait_plant(89.0));
    EXPECT_TRUE(wait_read_failed(two_polls + 2s)) << "at plant minute " << plant_minutes();
    EXPECT_EQ(status(registers::status_offset::plc_link), 1);
    EXPECT_TRUE(wait_input(a_anoxic_no3, good, reason_ok, 30s));

    // 1:45-1:50 replies with the wrong transaction id: not matched, read failures.
    ASSERT_TRUE(wait_plant(104.0));
    EXPECT_TRUE(wait_read_failed(two_polls + 2s)) << "at plant minute " << plant_minutes();
    EXPECT_TRUE(wait_input(a_anoxic_no3, good, reason_ok, 30s));

    // 2:00-2:05 the connection is dropped on every request.
    ASSERT_TRUE(wait_plant(119.0));
    EXPECT_TRUE(wait_read_failed(two_polls + 2s)) << "at plant minute " << plant_minutes();
    EXPECT_TRUE(wait_input(a_anoxic_no3, good, reason_ok, 30s));
    // The link register follows on the daemon's next one-second tick.
    EXPECT_TRUE(test::wait_for([&] { return status(registers::status_offset::plc_link) == 1; }, two_polls));

    // flocd wrote nothing to the PLC through all of it; the journal has both verdicts.
    daemon->stop();
    plant->stop();
    std::error_code journal_ec;
    const auto journal = floc::store::read_whole(dir.file("journal.jsonl"), journal_ec).value_or("");
    const auto disagreed = journal.find("\"event\":\"probe_check\",\"entry\":\"a_anoxic_no3_check\"");
    ASSERT_NE(disagreed, std::string::npos) << journal;
    EXPECT_NE(journal.find("\"agrees\":false", disagreed), std::string::npos);
    EXPECT_NE(journal.find("\"agrees\":true", disagreed), std::string::npos);
    std::error_code ec;
    const auto log = floc::store::read_whole(plant->client_log(), ec).value_or("");
    EXPECT_NE(log.find("\"writes\":0"), std::string::npos) << log;
}

} // namespace
