// Sensor models and the fault schedule (definitions of our own).
#include "floc/sim/sensors.hpp"

#include "support.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <limits>

namespace {

using namespace floc::sim;

sensor_spec probe() {
    sensor_spec s;
    s.name = "probe";
    s.sample_interval_s = 10.0;
    s.range_min = 0.0;
    s.range_max = 20.0;
    return s;
}

TEST(Sensor, FirstOrderLagReachesSixtyThreePercentAfterOneTimeConstant) {
    sensor_spec spec = probe();
    spec.lag_s = 120.0;
    sensor s{spec, 1};
    s.sample(0.0, 0.0);
    for (double t = 10.0; t <= 120.0 + 1e-9; t += 10.0) {
        s.sample(t, 10.0);
    }
    EXPECT_NEAR(s.reading(), 10.0 * (1.0 - std::exp(-1.0)), 1e-9);
}

TEST(Sensor, NoiseHasTheGivenStandardDeviationAndSeedReproducesIt) {
    sensor_spec spec = probe();
    spec.noise_sd = 0.1;
    sensor a{spec, 42};
    sensor b{spec, 42};
    double sum = 0.0;
    double sum2 = 0.0;
    const int n = 20000;
    for (int i = 0; i < n; ++i) {
        a.sample(i * 10.0, 5.0);
        b.sample(i * 10.0, 5.0);
        EXPECT_EQ(a.reading(), b.reading());
        sum += a.reading() - 5.0;
        sum2 += (a.reading() - 5.0) * (a.reading() - 5.0);
    }
    const double mean = sum / n;
    EXPECT_NEAR(mean, 0.0, 0.005);
    EXPECT_NEAR(std::sqrt(sum2 / n - mean * mean), 0.1, 0.004);
}

TEST(Sensor, RangeClampAndSampleInstants) {
    sensor s{probe(), 1};
    s.sample(0.0, 35.0);
    EXPECT_EQ(s.reading(), 20.0);
    s.sample(10.0, -3.0);
    EXPECT_EQ(s.reading(), 0.0);
    EXPECT_DOUBLE_EQ(s.next_sample_after(10.0), 20.0);
    EXPECT_DOUBLE_EQ(s.next_sample_after(14.0), 20.0);
}

TEST(Sensor, EveryFaultKind) {
    sensor_spec spec = probe();
    spec.faults = {
        {fault_kind::stuck, 100.0, 200.0, 0.0, false},
        {fault_kind::drift, 300.0, 300.0 + 86400.0, 2.0, false},
        {fault_kind::spike, 90000.0, 90010.0, 8.0, false},
        {fault_kind::dropout, 91000.0, 91100.0, 0.0, false},
        {fault_kind::dropout, 92000.0, 92100.0, 0.0, true},
        {fault_kind::offset, 93000.0, std::numeric_limits<double>::infinity(), -0.5, false},
    };
    sensor s{spec, 1};
    s.sample(90.0, 3.0);
    s.sample(100.0, 4.0);  // stuck from here at the reading it had
    s.sample(150.0, 9.0);
    EXPECT_EQ(s.reading(), 3.0);
    s.sample(200.0, 9.0);  // released
    EXPECT_EQ(s.reading(), 9.0);
    s.sample(300.0 + 43200.0, 5.0);  // half a day into a drift of 2 per day
    EXPECT_NEAR(s.reading(), 6.0, 1e-9);
    s.sample(90000.0, 5.0);
    EXPECT_NEAR(s.reading(), 13.0, 1e-9);
    s.sample(90010.0, 5.0);
    EXPECT_NEAR(s.reading(), 5.0, 1e-9);
    s.sample(91000.0, 5.0);
    EXPECT_TRUE(std::isnan(s.reading()));
    EXPECT_EQ(s.last_update_s(), 91000.0);
    s.sample(91900.0, 6.0);
    EXPECT_EQ(s.reading(), 6.0);
    s.sample(92050.0, 7.0);  // no update: the last reading and its time stay
    EXPECT_EQ(s.reading(), 6.0);
    EXPECT_EQ(s.last_update_s(), 91900.0);
    s.sample(93000.0, 7.0);
    EXPECT_NEAR(s.reading(), 6.5, 1e-9);
}

TEST(Events, LinkStateAndAvailability) {
    const std::vector<plant_event> events{
        test::scheduled(event_kind::link_loss, 100.0, 200.0, no_index, 0.0),
        test::scheduled(event_kind::slow_replies, 150.0, 400.0, no_index, 1.5),
        test::scheduled(event_kind::blower_trip, 500.0, 600.0, 1, 0.0),
        test::scheduled(event_kind::power_failure, 700.0, 800.0, no_index, 0.0),
    };
    EXPECT_TRUE(link_at(events, 50.0).up);
    EXPECT_FALSE(link_at(events, 150.0).up);
    EXPECT_EQ(link_at(events, 300.0).reply_delay_s, 1.5);
    EXPECT_TRUE(link_at(events, 450.0).up);
    plant_controls u;
    u.trains.resize(2);
    apply_events(events, 550.0, u);
    EXPECT_TRUE(u.trains[0].blowers_available);
    EXPECT_FALSE(u.trains[1].blowers_available);
    apply_events(events, 750.0, u);
    EXPECT_TRUE(power_failed_at(events, 750.0));
    EXPECT_FALSE(u.trains[0].blowers_available);
    EXPECT_FALSE(u.trains[0].pumps_available);
    apply_events(events, 850.0, u);
    EXPECT_TRUE(u.trains[0].pumps_available && u.trains[1].blowers_available);
}

TEST(Events, ProtocolFaultsOnTheirSchedule) {
    std::vector<plant_event> events{
        test::scheduled(event_kind::link_loss, 100.0, 200.0),
        test::scheduled(event_kind::exception_replies, 150.0, 400.0),
        test::scheduled(event_kind::blower_trip, 500.0, 600.0, 1),
        test::scheduled(event_kind::wrong_transaction_id, 650.0, 700.0),
    };
    EXPECT_TRUE(is_protocol_fault(event_kind::dropped_connections));
    EXPECT_FALSE(is_protocol_fault(event_kind::power_failure));
    // Link loss is the server's to act on, not a fault rule.
    EXPECT_TRUE(protocol_faults_at(events, 120.0).empty());
    EXPECT_EQ(protocol_faults_at(events, 160.0), std::vector<std::size_t>{1});
    EXPECT_TRUE(protocol_faults_at(events, 550.0).empty());  // a blower trip is the plant's
    EXPECT_EQ(protocol_faults_at(events, 660.0), std::vector<std::size_t>{3});
    // The instants the server's rules change; blower trips are not among them.
    EXPECT_EQ(next_protocol_change_after(events, 0.0), 100.0);
    EXPECT_EQ(next_protocol_change_after(events, 100.0), 150.0);
    EXPECT_EQ(next_protocol_change_after(events, 400.0), 650.0);
    EXPECT_EQ(next_protocol_change_after(events, 700.0), std::numeric_limits<double>::infinity());
    EXPECT_EQ(to_string(event_kind::wrong_transaction_id), "wrong_transaction_id");
}

TEST(Events, ActiveSensorFaults) {
    sensor_spec a;
    a.name = "a";
    sensor_fault stuck;
    stuck.kind = fault_kind::stuck;
    stuck.start_s = 10.0;
    stuck.end_s = 20.0;
    sensor_fault offset;
    offset.kind = fault_kind::offset;
    offset.start_s = 15.0;  // a calibration offset lasts
    a.faults = {stuck, offset};
    const std::vector<sensor_spec> sensors{sensor_spec{}, a};
    EXPECT_TRUE(sensor_faults_at(sensors, 5.0).empty());
    EXPECT_EQ(sensor_faults_at(sensors, 16.0), (std::vector<std::pair<std::size_t, std::size_t>>{{1, 0}, {1, 1}}));
    EXPECT_EQ(sensor_faults_at(sensors, 1e6), (std::vector<std::pair<std::size_t, std::size_t>>{{1, 1}}));
    EXPECT_EQ(to_string(fault_kind::offset), "offset");
}

} // namespace
