// The request parser's values and the in-memory register bank. Field layouts from the MODBUS
// Application Protocol Specification V1.1b3 §6.
#include "hex.hpp"

#include "floc/modbus/register_bank.hpp"
#include "floc/modbus/request.hpp"

#include <gtest/gtest.h>

namespace {

using namespace floc::modbus;
using floc::modbus::test::bytes;
using floc::modbus::test::hex;

TEST(Request, ReadHoldingRegistersFields) {
    const auto pdu = bytes("03 00 6B 00 03"); // §6.3
    const parse_result r = parse_request(pdu);
    ASSERT_TRUE(r.ok());
    const auto* q = std::get_if<read_registers_request>(&r.value);
    ASSERT_NE(q, nullptr);
    EXPECT_EQ(q->from, table::holding_registers);
    EXPECT_EQ(q->address, 0x6B);
    EXPECT_EQ(q->count, 3);
}

TEST(Request, WriteMultipleRegistersKeepsItsValueBytes) {
    const auto pdu = bytes("10 00 01 00 02 04 00 0A 01 02"); // §6.12
    const parse_result r = parse_request(pdu);
    ASSERT_TRUE(r.ok());
    const auto* q = std::get_if<write_registers_request>(&r.value);
    ASSERT_NE(q, nullptr);
    EXPECT_EQ(q->address, 1);
    EXPECT_EQ(q->count, 2);
    EXPECT_EQ(hex(q->values), "00 0A 01 02");
}

TEST(Request, ReadWriteFields) {
    const auto pdu = bytes("17 00 03 00 06 00 0E 00 03 06 00 FF 00 FF 00 FF"); // §6.17
    const parse_result r = parse_request(pdu);
    ASSERT_TRUE(r.ok());
    const auto* q = std::get_if<read_write_registers_request>(&r.value);
    ASSERT_NE(q, nullptr);
    EXPECT_EQ(q->read_address, 3);
    EXPECT_EQ(q->read_count, 6);
    EXPECT_EQ(q->write_address, 0x0E);
    EXPECT_EQ(q->write_count, 3);
    const request_spans s = spans_of(r.value);
    ASSERT_EQ(s.count, 2U);
    EXPECT_EQ(s.spans[0].address, 0x0E);
    EXPECT_EQ(s.spans[0].count, 3);
    EXPECT_EQ(s.spans[1].address, 3);
    EXPECT_EQ(s.spans[1].count, 6);
}

TEST(Request, SpansOfEachKind) {
    const auto span_of = [](const char* pdu_hex) {
        const auto pdu = bytes(pdu_hex);
        const parse_result r = parse_request(pdu);
        EXPECT_TRUE(r.ok()) << pdu_hex;
        return spans_of(r.value);
    };
    EXPECT_EQ(span_of("01 00 13 00 13").spans[0].in, table::coils);
    EXPECT_EQ(span_of("02 00 C4 00 16").spans[0].in, table::discrete_inputs);
    EXPECT_EQ(span_of("04 00 08 00 01").spans[0].in, table::input_registers);
    EXPECT_EQ(span_of("05 00 AC FF 00").spans[0].address, 0xAC);
    EXPECT_EQ(span_of("0F 00 13 00 0A 02 CD 01").spans[0].count, 10);
    EXPECT_EQ(span_of("16 00 04 00 F2 00 25").spans[0].in, table::holding_registers);
    EXPECT_EQ(span_of("2B 0E 01 00").count, 0U);
}

TEST(RegisterBank, TablesAreSeparateAndStartAtZero) {
    register_bank bank{bank_sizes{8, 16, 4, 2}};
    EXPECT_EQ(bank.bits(table::coils).size(), 8U);
    EXPECT_EQ(bank.bits(table::discrete_inputs).size(), 16U);
    EXPECT_EQ(bank.registers(table::holding_registers).size(), 4U);
    EXPECT_EQ(bank.registers(table::input_registers).size(), 2U);
    bank.registers(table::input_registers)[1] = 42;
    std::array<std::uint16_t, 2> out{};
    EXPECT_FALSE(bank.read_registers(table::input_registers, 0, out, {}).has_value());
    EXPECT_EQ(out[1], 42);
    EXPECT_EQ(bank.read_registers(table::input_registers, 1, out, {}),
              exception_code::illegal_data_address);
    EXPECT_EQ(bank.read_registers(table::coils, 0, out, {}), exception_code::illegal_data_address);
}

TEST(RegisterBank, SizesAreCappedAtTheAddressSpace) {
    register_bank bank{bank_sizes{70000, 0, 70000, 0}};
    EXPECT_EQ(bank.bits(table::coils).size(), 65536U);
    EXPECT_EQ(bank.registers(table::holding_registers).size(), 65536U);
}

TEST(RegisterBank, WritesStoreOnesAndZeros) {
    register_bank bank{bank_sizes{4, 0, 0, 0}};
    const std::array<std::uint8_t, 3> values{7, 0, 1};
    EXPECT_FALSE(bank.write_coils(1, values, {}).has_value());
    EXPECT_EQ(bank.bits(table::coils)[1], 1);
    EXPECT_EQ(bank.bits(table::coils)[2], 0);
    EXPECT_EQ(bank.bits(table::coils)[3], 1);
}

} // namespace
