// The fault plan's matching rules, without a socket.
#include "floc/modbus/faults.hpp"

#include <gtest/gtest.h>

namespace {

using namespace floc::modbus;
using namespace std::chrono_literals;

request_spans holding(std::uint16_t address, std::uint16_t count) {
    request_spans s;
    s.spans[0] = address_span{table::holding_registers, address, count};
    s.count = 1;
    return s;
}

TEST(FaultPlan, OffByDefault) {
    fault_plan plan;
    EXPECT_EQ(plan.active(), 0U);
    const fault_effect e = plan.apply(0x03, holding(0, 1));
    EXPECT_FALSE(e.drop);
    EXPECT_FALSE(e.exception.has_value());
    EXPECT_FALSE(e.wrong_transaction_id);
    EXPECT_EQ(e.delay, 0ms);
}

TEST(FaultPlan, FunctionAndAddressFilters) {
    fault_plan plan;
    fault_rule r;
    r.kind = fault_kind::exception_reply;
    r.function = 0x04;
    r.first_address = 10;
    r.last_address = 19;
    r.exception = exception_code::gateway_path_unavailable;
    plan.set({r});
    EXPECT_FALSE(plan.apply(0x03, holding(10, 1)).exception.has_value()); // other function
    EXPECT_FALSE(plan.apply(0x04, holding(0, 10)).exception.has_value()); // 0..9
    EXPECT_FALSE(plan.apply(0x04, holding(20, 5)).exception.has_value()); // 20..24
    EXPECT_EQ(plan.apply(0x04, holding(9, 2)).exception, exception_code::gateway_path_unavailable);
    EXPECT_EQ(plan.apply(0x04, holding(19, 1)).exception, exception_code::gateway_path_unavailable);
    EXPECT_FALSE(plan.apply(0x04, request_spans{}).exception.has_value()); // no address
}

TEST(FaultPlan, FullRangeMatchesRequestsWithoutAddresses) {
    fault_plan plan;
    fault_rule r;
    r.kind = fault_kind::drop_connection;
    plan.set({r});
    EXPECT_TRUE(plan.apply(0x2B, request_spans{}).drop);
    EXPECT_TRUE(plan.apply(0x41, request_spans{}).drop);
}

TEST(FaultPlan, SecondSpanOfReadWriteCounts) {
    fault_plan plan;
    fault_rule r;
    r.kind = fault_kind::wrong_transaction_id;
    r.first_address = 500;
    r.last_address = 500;
    plan.set({r});
    request_spans rw = holding(0, 1);
    rw.spans[1] = address_span{table::holding_registers, 499, 3};
    rw.count = 2;
    EXPECT_TRUE(plan.apply(0x17, rw).wrong_transaction_id);
}

TEST(FaultPlan, RulesCombineAndRetire) {
    fault_plan plan;
    fault_rule slow;
    slow.kind = fault_kind::delay_reply;
    slow.delay = 50ms;
    fault_rule slower = slow;
    slower.delay = 200ms;
    slower.times = 2;
    fault_rule first_code;
    first_code.kind = fault_kind::exception_reply;
    first_code.exception = exception_code::server_device_failure;
    fault_rule second_code = first_code;
    second_code.exception = exception_code::acknowledge;
    plan.set({slow, slower, first_code, second_code});
    EXPECT_EQ(plan.active(), 4U);
    fault_effect e = plan.apply(0x03, holding(0, 1));
    EXPECT_EQ(e.delay, 200ms);                                     // the longest
    EXPECT_EQ(e.exception, exception_code::server_device_failure); // the first
    e = plan.apply(0x03, holding(0, 1));
    EXPECT_EQ(e.delay, 200ms);
    EXPECT_EQ(plan.active(), 3U); // `slower` is spent
    e = plan.apply(0x03, holding(0, 1));
    EXPECT_EQ(e.delay, 50ms);
    plan.set({});
    EXPECT_EQ(plan.active(), 0U);
}

} // namespace
