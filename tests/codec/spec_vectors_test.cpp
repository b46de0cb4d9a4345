// Byte-exact vectors from the specifications' own examples, grouped by clause:
//   AppSpec  = MODBUS Application Protocol Specification V1.1b3 (Modbus Organization, 2012)
//   TCPGuide = MODBUS Messaging on TCP/IP Implementation Guide V1.0b (Modbus-IDA, 2006)
// The PDU bytes are the specs'; where a vector is shown as a whole ADU, the MBAP wrapping
// (transaction 0x0001, protocol 0, unit 0xFF) is ours, except TCPGuide §4.4.1.2's, which is
// verbatim.
#include "answer.hpp"

#include "floc/modbus/register_bank.hpp"

#include <gtest/gtest.h>

namespace {

using namespace floc::modbus;
using floc::modbus::test::answer;
using floc::modbus::test::answer_adu;
using floc::modbus::test::bytes;

// Sets `count` bits of `in` from `address` on, from packed bytes (first bit in the LSB).
void set_packed(register_bank& bank, table in, std::size_t address, std::string_view packed_hex,
                std::size_t count) {
    const auto packed = bytes(packed_hex);
    for (std::size_t i = 0; i < count; ++i) {
        bank.bits(in)[address + i] =
            static_cast<std::uint8_t>((static_cast<unsigned>(packed[i / 8]) >> (i % 8)) & 1U);
    }
}

class SpecVectors : public ::testing::Test {
protected:
    register_bank bank{bank_sizes{1000, 1000, 1000, 1000}};
};

// --- TCPGuide §3.1.3 / §4.4.1.2: the MBAP header ------------------------------------------------

TEST_F(SpecVectors, TcpGuide_4_4_1_2_ReadRegister5) {
    // "read register #5" is PDU address 4; transaction id 0x1501 and unit 0xFF echoed, length
    // computed as unit id + PDU.
    bank.registers(table::holding_registers)[4] = 0x1234;
    EXPECT_EQ(answer_adu(bank, "15 01 00 00 00 06 FF 03 00 04 00 01"),
              "15 01 00 00 00 05 FF 03 02 12 34");
}

TEST_F(SpecVectors, TcpGuide_3_1_3_HeaderFieldsDecoded) {
    const auto adu = bytes("15 01 00 00 00 06 FF 03 00 04 00 01");
    const decoded_frame f = decode_frame(adu);
    ASSERT_EQ(f.status, decode_status::complete);
    EXPECT_EQ(f.header.transaction_id, 0x1501);
    EXPECT_EQ(f.header.protocol_id, 0);
    EXPECT_EQ(f.header.length, 6);
    EXPECT_EQ(f.header.unit_id, 0xFF);
    EXPECT_EQ(f.size, 12U);
    EXPECT_EQ(floc::modbus::test::hex(f.pdu), "03 00 04 00 01");
}

// --- AppSpec §6.1 Read Coils
// ----------------------------------------------------------------------

TEST_F(SpecVectors, AppSpec_6_1_ReadCoils20To38) {
    set_packed(bank, table::coils, 0x13, "CD 6B 05", 19);
    EXPECT_EQ(answer(bank, "01 00 13 00 13"), "01 03 CD 6B 05");
}

// --- AppSpec §6.2 Read Discrete Inputs
// --------------------------------------------------------------

TEST_F(SpecVectors, AppSpec_6_2_ReadDiscreteInputs197To218) {
    set_packed(bank, table::discrete_inputs, 0xC4, "AC DB 35", 22);
    EXPECT_EQ(answer(bank, "02 00 C4 00 16"), "02 03 AC DB 35");
}

// --- AppSpec §6.3 Read Holding Registers ---------------------------------------------------------

TEST_F(SpecVectors, AppSpec_6_3_ReadHoldingRegisters108To110) {
    auto hr = bank.registers(table::holding_registers);
    hr[0x6B] = 0x022B;
    hr[0x6C] = 0x0000;
    hr[0x6D] = 0x0064;
    EXPECT_EQ(answer(bank, "03 00 6B 00 03"), "03 06 02 2B 00 00 00 64");
    EXPECT_EQ(answer_adu(bank, "00 01 00 00 00 06 FF 03 00 6B 00 03"),
              "00 01 00 00 00 09 FF 03 06 02 2B 00 00 00 64");
}

// --- AppSpec §6.4 Read Input Registers
// -------------------------------------------------------------

TEST_F(SpecVectors, AppSpec_6_4_ReadInputRegister9) {
    bank.registers(table::input_registers)[8] = 0x000A;
    EXPECT_EQ(answer(bank, "04 00 08 00 01"), "04 02 00 0A");
}

// --- AppSpec §6.5 Write Single Coil
// ------------------------------------------------------------------

TEST_F(SpecVectors, AppSpec_6_5_WriteCoil173On) {
    EXPECT_EQ(answer(bank, "05 00 AC FF 00"), "05 00 AC FF 00");
    EXPECT_EQ(bank.bits(table::coils)[0xAC], 1);
    EXPECT_EQ(answer(bank, "05 00 AC 00 00"), "05 00 AC 00 00");
    EXPECT_EQ(bank.bits(table::coils)[0xAC], 0);
}

// --- AppSpec §6.6 Write Single Register
// -------------------------------------------------------------

TEST_F(SpecVectors, AppSpec_6_6_WriteRegister2) {
    EXPECT_EQ(answer(bank, "06 00 01 00 03"), "06 00 01 00 03");
    EXPECT_EQ(bank.registers(table::holding_registers)[1], 3);
}

// --- AppSpec §6.11 Write Multiple Coils ----------------------------------------------------------

TEST_F(SpecVectors, AppSpec_6_11_WriteTenCoilsFrom20) {
    EXPECT_EQ(answer(bank, "0F 00 13 00 0A 02 CD 01"), "0F 00 13 00 0A");
    // CD = 1100 1101 for coils 27..20, 01 for coils 29..28 (§6.11's table).
    const std::array<std::uint8_t, 10> expected{1, 0, 1, 1, 0, 0, 1, 1, 1, 0};
    for (std::size_t i = 0; i < expected.size(); ++i) {
        EXPECT_EQ(bank.bits(table::coils)[0x13 + i], expected.at(i)) << "coil address " << 0x13 + i;
    }
    EXPECT_EQ(bank.bits(table::coils)[0x13 + 10], 0); // padding bits are not coils
}

// --- AppSpec §6.12 Write Multiple Registers
// ----------------------------------------------------------

TEST_F(SpecVectors, AppSpec_6_12_WriteTwoRegistersFrom2) {
    EXPECT_EQ(answer(bank, "10 00 01 00 02 04 00 0A 01 02"), "10 00 01 00 02");
    EXPECT_EQ(bank.registers(table::holding_registers)[1], 0x000A);
    EXPECT_EQ(bank.registers(table::holding_registers)[2], 0x0102);
}

// --- AppSpec §6.16 Mask Write Register
// -------------------------------------------------------------

TEST_F(SpecVectors, AppSpec_6_16_MaskWriteRegister5) {
    bank.registers(table::holding_registers)[4] = 0x12;
    EXPECT_EQ(answer(bank, "16 00 04 00 F2 00 25"), "16 00 04 00 F2 00 25");
    EXPECT_EQ(bank.registers(table::holding_registers)[4], 0x17);
}

// --- AppSpec §6.17 Read/Write Multiple Registers
// ---------------------------------------------------

TEST_F(SpecVectors, AppSpec_6_17_ReadSixWriteThree) {
    auto hr = bank.registers(table::holding_registers);
    const std::array<std::uint16_t, 6> present{0x00FE, 0x0ACD, 0x0001, 0x0003, 0x000D, 0x00FF};
    std::copy(present.begin(), present.end(), hr.begin() + 3);
    EXPECT_EQ(answer(bank, "17 00 03 00 06 00 0E 00 03 06 00 FF 00 FF 00 FF"),
              "17 0C 00 FE 0A CD 00 01 00 03 00 0D 00 FF");
    EXPECT_EQ(hr[0x0E], 0x00FF);
    EXPECT_EQ(hr[0x0F], 0x00FF);
    EXPECT_EQ(hr[0x10], 0x00FF);
}

TEST_F(SpecVectors, AppSpec_6_17_WriteIsDoneBeforeRead) {
    // Overlapping ranges: the read returns the values just written.
    EXPECT_EQ(answer(bank, "17 00 0E 00 02 00 0E 00 02 04 12 34 56 78"), "17 04 12 34 56 78");
}

// --- AppSpec §6.21 Read Device Identification
// ------------------------------------------------------

TEST_F(SpecVectors, AppSpec_6_21_BasicIdentificationInOneResponse) {
    // §6.21's example answers basic stream access with the three basic objects, more_follows 00;
    // the strings are ours.
    device_identity id;
    id.vendor_name = "floc project";
    id.product_code = "FLOCSIM";
    id.revision = "V0.1";
    EXPECT_EQ(answer(bank, "2B 0E 01 00", id),
              "2B 0E 01 81 00 00 03 "
              "00 0C 66 6C 6F 63 20 70 72 6F 6A 65 63 74 " // "floc project"
              "01 07 46 4C 4F 43 53 49 4D "                // "FLOCSIM"
              "02 04 56 30 2E 31");                        // "V0.1"
}

// --- AppSpec §7 Exception responses
// ----------------------------------------------------------------

TEST_F(SpecVectors, AppSpec_7_ReadCoilsAtMissingAddress) {
    // §7's example: read coils at 0x04A1 on a device without it -> 81 02.
    EXPECT_EQ(answer(bank, "01 04 A1 00 01"), "81 02");
    EXPECT_EQ(answer_adu(bank, "00 01 00 00 00 06 FF 01 04 A1 00 01"),
              "00 01 00 00 00 03 FF 81 02");
}

TEST_F(SpecVectors, AppSpec_7_HundredRegistersOffset96) {
    // §7 (code 02): with 100 registers, a request at offset 96 for 4 succeeds, for 5 fails.
    register_bank hundred{bank_sizes{0, 0, 100, 0}};
    EXPECT_EQ(answer(hundred, "03 00 60 00 04"), "03 08 00 00 00 00 00 00 00 00");
    EXPECT_EQ(answer(hundred, "03 00 60 00 05"), "83 02");
}

} // namespace
