// Exception responses and the order of the checks (AppSpec = MODBUS Application Protocol
// Specification V1.1b3: §7 for the codes, the state diagrams of §6.1-§6.17 for the order:
// function code -> 01, quantity/byte count/value -> 03, address -> 02, the action -> 04), and
// the quantity limits of each function code at and beyond their bounds.
#include "answer.hpp"

#include "floc/modbus/register_bank.hpp"
#include "floc/modbus/request.hpp"

#include <gtest/gtest.h>

#include <string>
#include <vector>

namespace {

using namespace floc::modbus;
using floc::modbus::test::answer;
using floc::modbus::test::bytes;

// A register space that refuses everything with one code and counts the calls.
class refusing_space final : public register_space {
public:
    explicit refusing_space(exception_code code) : code_(code) {}
    refusal read_bits(table, std::uint16_t, std::span<std::uint8_t>, const client_info&) override {
        ++calls;
        return code_;
    }
    refusal read_registers(table, std::uint16_t, std::span<std::uint16_t>,
                           const client_info&) override {
        ++calls;
        return code_;
    }
    refusal write_coils(std::uint16_t, std::span<const std::uint8_t>, const client_info&) override {
        ++calls;
        return code_;
    }
    refusal write_registers(std::uint16_t, std::span<const std::uint16_t>,
                            const client_info&) override {
        ++calls;
        return code_;
    }
    int calls = 0;

private:
    exception_code code_;
};

// Hex of a PDU: function code, 16-bit address, 16-bit quantity, then `tail`.
std::string pdu(std::uint8_t fc, unsigned address, unsigned quantity,
                const std::string& tail = {}) {
    char head[32];
    std::snprintf(head, sizeof head, "%02X %02X %02X %02X %02X", fc, (address >> 8U) & 0xFFU,
                  address & 0xFFU, (quantity >> 8U) & 0xFFU, quantity & 0xFFU);
    return std::string{head} + (tail.empty() ? "" : " " + tail);
}

// `n` register values of 0x0001 and their byte count, as the tail of an FC 16 or 23 request.
std::string register_tail(unsigned n, unsigned byte_count) {
    char count[8];
    std::snprintf(count, sizeof count, "%02X", byte_count & 0xFFU);
    std::string s = count;
    for (unsigned i = 0; i < n; ++i) {
        s += " 00 01";
    }
    return s;
}

// `bits` coils, all on, and the byte count, as the tail of an FC 15 request.
std::string coil_tail(unsigned bits, unsigned byte_count) {
    char count[8];
    std::snprintf(count, sizeof count, "%02X", byte_count & 0xFFU);
    std::string s = count;
    for (unsigned i = 0; i < (bits + 7) / 8; ++i) {
        s += " FF";
    }
    return s;
}

class Exceptions : public ::testing::Test {
protected:
    register_bank bank{bank_sizes{65536, 65536, 65536, 65536}};
    register_bank small{bank_sizes{100, 100, 100, 100}};
};

// --- 01 Illegal Function (AppSpec §7; TCPGuide §4.4.2.2: function code not valid) -------------

TEST_F(Exceptions, UnknownFunctionCodes) {
    EXPECT_EQ(answer(bank, "41 00 00"), "C1 01");       // user-defined range 65-72 (§5)
    EXPECT_EQ(answer(bank, "07"), "87 01");             // serial line only (§6.7)
    EXPECT_EQ(answer(bank, "08 00 00 12 34"), "88 01"); // serial line only (§6.8)
    EXPECT_EQ(answer(bank, "11"), "91 01");             // serial line only (§6.13)
    EXPECT_EQ(answer(bank, "14 07 06 00 04 00 01 00 02"), "94 01"); // file records: not served
    EXPECT_EQ(answer(bank, "18 00 00"), "98 01");                   // FIFO queue: not served
    EXPECT_EQ(answer(bank, "00"), "80 01"); // function code 0 is invalid (§4.1)
}

TEST_F(Exceptions, FunctionCheckComesBeforeLength) {
    // An unknown function with any data, or none, is 01 and not 03.
    EXPECT_EQ(answer(bank, "42"), "C2 01");
    EXPECT_EQ(answer(bank, "42 01 02 03 04 05 06 07 08 09"), "C2 01");
}

TEST_F(Exceptions, OtherEncapsulatedInterfaceTypes) {
    // AppSpec Annex A: MEI 13 (CANopen) and 14 (device identification) are the defined types;
    // only 14 is served.
    EXPECT_EQ(answer(bank, "2B 0D 00 00"), "AB 01");
    EXPECT_EQ(answer(bank, "2B 00 01 00"), "AB 01");
    EXPECT_EQ(answer(bank, "2B FF 01 00"), "AB 01");
}

// --- 03 Illegal Data Value: quantity limits (AppSpec §6.1-§6.4, §6.11, §6.12, §6.17) ----------

TEST_F(Exceptions, ReadBitQuantities) {
    for (const std::uint8_t fc : {std::uint8_t{0x01}, std::uint8_t{0x02}}) {
        const std::string err = fc == 0x01 ? "81 03" : "82 03";
        EXPECT_EQ(answer(bank, pdu(fc, 0, 0)), err);
        EXPECT_EQ(answer(bank, pdu(fc, 0, 2001)), err);
        EXPECT_EQ(answer(bank, pdu(fc, 0, 0xFFFF)), err);
        EXPECT_EQ(answer(bank, pdu(fc, 0, 1)).substr(0, 5), fc == 0x01 ? "01 01" : "02 01");
        // 2000 bits: 250 data bytes, a 252-byte response PDU.
        EXPECT_EQ(answer(bank, pdu(fc, 0, 2000)).substr(0, 5), fc == 0x01 ? "01 FA" : "02 FA");
    }
}

TEST_F(Exceptions, ReadRegisterQuantities) {
    // Boundary vectors: FC 03 with quantity 0 or 126 -> 83 03.
    for (const std::uint8_t fc : {std::uint8_t{0x03}, std::uint8_t{0x04}}) {
        const std::string err = fc == 0x03 ? "83 03" : "84 03";
        EXPECT_EQ(answer(bank, pdu(fc, 0, 0)), err);
        EXPECT_EQ(answer(bank, pdu(fc, 0, 126)), err);
        // 125 registers: byte count 250 (0xFA), a 252-byte response PDU.
        const std::string ok = answer(bank, pdu(fc, 0, 125));
        EXPECT_EQ(ok.substr(0, 5), fc == 0x03 ? "03 FA" : "04 FA");
        EXPECT_EQ(bytes(ok).size(), 252U);
    }
}

TEST_F(Exceptions, WriteCoilsQuantityAndByteCount) {
    EXPECT_EQ(answer(bank, pdu(0x0F, 0, 1968, coil_tail(1968, 246))), "0F 00 00 07 B0");
    EXPECT_EQ(answer(bank, pdu(0x0F, 0, 1969, coil_tail(1969, 247))), "8F 03");
    EXPECT_EQ(answer(bank, pdu(0x0F, 0, 0, "00")), "8F 03");
    EXPECT_EQ(answer(bank, pdu(0x0F, 0, 10, "01 FF")), "8F 03");       // byte count 1 for 10 coils
    EXPECT_EQ(answer(bank, pdu(0x0F, 0, 10, "02 FF")), "8F 03");       // 1 byte where 2 announced
    EXPECT_EQ(answer(bank, pdu(0x0F, 0, 10, "02 FF 03 00")), "8F 03"); // one byte too many
    EXPECT_EQ(answer(bank, "0F 00 00 00 0A"), "8F 03");                // no byte count at all
}

TEST_F(Exceptions, WriteRegistersQuantityAndByteCount) {
    // Boundary vectors: FC 16 with quantity 124 -> 90 03; byte count != 2 * quantity -> 90 03.
    EXPECT_EQ(answer(bank, pdu(0x10, 0, 123, register_tail(123, 246))), "10 00 00 00 7B");
    EXPECT_EQ(answer(bank, pdu(0x10, 0, 124, register_tail(124, 248))), "90 03");
    EXPECT_EQ(answer(bank, pdu(0x10, 0, 0, "00")), "90 03");
    EXPECT_EQ(answer(bank, pdu(0x10, 0, 2, register_tail(2, 3))), "90 03");
    EXPECT_EQ(answer(bank, pdu(0x10, 0, 2, register_tail(1, 4))), "90 03");
    EXPECT_EQ(answer(bank, pdu(0x10, 0, 2, register_tail(3, 4))), "90 03");
}

TEST_F(Exceptions, ReadWriteQuantities) {
    // FC 23: read 1..125, write 1..121, byte count = 2 * write quantity.
    const auto rw = [](unsigned read_qty, unsigned write_qty, unsigned values,
                       unsigned byte_count) {
        return pdu(0x17, 0, read_qty,
                   pdu(0, 0x100, write_qty).substr(3) + " " + register_tail(values, byte_count));
    };
    EXPECT_EQ(answer(bank, rw(125, 121, 121, 242)).substr(0, 5), "17 FA");
    EXPECT_EQ(answer(bank, rw(126, 1, 1, 2)), "97 03");
    EXPECT_EQ(answer(bank, rw(0, 1, 1, 2)), "97 03");
    EXPECT_EQ(answer(bank, rw(1, 122, 122, 244)), "97 03");
    EXPECT_EQ(answer(bank, rw(1, 0, 0, 0)), "97 03");
    EXPECT_EQ(answer(bank, rw(1, 2, 2, 2)), "97 03");
}

TEST_F(Exceptions, WriteCoilValueMustBeOnOrOff) {
    // AppSpec §6.5: 0xFF00 requests on, 0x0000 off; all other values are illegal.
    EXPECT_EQ(answer(bank, "05 00 01 12 34"), "85 03"); // boundary vector: value 0x1234
    EXPECT_EQ(answer(bank, "05 00 01 00 FF"), "85 03");
    EXPECT_EQ(answer(bank, "05 00 01 FF 01"), "85 03");
    EXPECT_EQ(answer(bank, "05 00 01 FF 00"), "05 00 01 FF 00");
}

TEST_F(Exceptions, ImpliedLengthWrong) {
    // AppSpec §7 names "the implied length is incorrect" as a cause of 03.
    EXPECT_EQ(answer(bank, "03 00 00 00"), "83 03");
    EXPECT_EQ(answer(bank, "03 00 00 00 01 00"), "83 03");
    EXPECT_EQ(answer(bank, "01"), "81 03");
    EXPECT_EQ(answer(bank, "06 00 01 00"), "86 03");
    EXPECT_EQ(answer(bank, "16 00 04 00 F2 00"), "96 03");
    EXPECT_EQ(answer(bank, "2B"), "AB 03");
    EXPECT_EQ(answer(bank, "2B 0E 01"), "AB 03");
}

// --- 02 Illegal Data Address ---------------------------------------------------------------------

TEST_F(Exceptions, AddressPastTheTable) {
    EXPECT_EQ(answer(small, pdu(0x01, 99, 1)).substr(0, 2), "01");
    EXPECT_EQ(answer(small, pdu(0x01, 99, 2)), "81 02");
    EXPECT_EQ(answer(small, pdu(0x02, 100, 1)), "82 02");
    EXPECT_EQ(answer(small, pdu(0x03, 96, 5)), "83 02");
    EXPECT_EQ(answer(small, pdu(0x04, 200, 1)), "84 02");
    EXPECT_EQ(answer(small, "05 00 64 FF 00"), "85 02");
    EXPECT_EQ(answer(small, "06 00 64 00 01"), "86 02");
    EXPECT_EQ(answer(small, pdu(0x0F, 95, 10, "02 FF 03")), "8F 02");
    EXPECT_EQ(answer(small, pdu(0x10, 99, 2, register_tail(2, 4))), "90 02");
    EXPECT_EQ(answer(small, "16 00 64 00 F2 00 25"), "96 02");
}

TEST_F(Exceptions, SpanPastAddress65535) {
    // Start + quantity beyond the 16-bit address space is outside every table (AppSpec §4.4).
    EXPECT_EQ(answer(bank, pdu(0x03, 0xFFFF, 1)).substr(0, 5), "03 02");
    EXPECT_EQ(answer(bank, pdu(0x03, 0xFFFF, 2)), "83 02");
    EXPECT_EQ(answer(bank, pdu(0x01, 0xFFF0, 17)), "81 02");
    EXPECT_EQ(answer(bank, pdu(0x10, 0xFFFF, 2, register_tail(2, 4))), "90 02");
}

TEST_F(Exceptions, QuantityIsCheckedBeforeAddress) {
    // The state diagrams of §6.1-§6.4 test the quantity (03) before the address (02): a request
    // that is wrong in both ways gets 03.
    EXPECT_EQ(answer(small, pdu(0x03, 5000, 0)), "83 03");
    EXPECT_EQ(answer(small, pdu(0x03, 5000, 200)), "83 03");
    EXPECT_EQ(answer(small, pdu(0x01, 5000, 2001)), "81 03");
    EXPECT_EQ(answer(small, pdu(0x10, 5000, 2, register_tail(2, 3))), "90 03");
    EXPECT_EQ(answer(small, "05 13 88 12 34"), "85 03");
}

TEST_F(Exceptions, ReadWriteChecksBothRangesBeforeWriting) {
    // AppSpec §6.17: the write happens only when both ranges are valid.
    small.registers(table::holding_registers)[10] = 0x0BAD;
    // Read range bad (98 + 5 > 100), write range good: 02, and nothing written.
    EXPECT_EQ(answer(small, pdu(0x17, 98, 5, "00 0A 00 01 02 12 34")), "97 02");
    EXPECT_EQ(small.registers(table::holding_registers)[10], 0x0BAD);
    // Write range bad: 02.
    EXPECT_EQ(answer(small, pdu(0x17, 0, 1, "00 64 00 01 02 12 34")), "97 02");
}

// --- The register space's refusal is sent as it is
// -------------------------------------------------

TEST_F(Exceptions, PolicyRefusalCodePassesThrough) {
    for (const exception_code code :
         {exception_code::illegal_function, exception_code::illegal_data_address,
          exception_code::server_device_failure, exception_code::server_device_busy,
          exception_code::gateway_target_failed}) {
        refusing_space space{code};
        const auto c = static_cast<unsigned>(code);
        const auto expect = [c](const char* fc) {
            char s[8];
            std::snprintf(s, sizeof s, "%s %02X", fc, c);
            return std::string{s};
        };
        EXPECT_EQ(answer(space, "01 00 00 00 01"), expect("81"));
        EXPECT_EQ(answer(space, "02 00 00 00 01"), expect("82"));
        EXPECT_EQ(answer(space, "03 00 00 00 01"), expect("83"));
        EXPECT_EQ(answer(space, "04 00 00 00 01"), expect("84"));
        EXPECT_EQ(answer(space, "05 00 00 FF 00"), expect("85"));
        EXPECT_EQ(answer(space, "06 00 00 00 01"), expect("86"));
        EXPECT_EQ(answer(space, "0F 00 00 00 01 01 01"), expect("8F"));
        EXPECT_EQ(answer(space, "10 00 00 00 01 02 00 01"), expect("90"));
        EXPECT_EQ(answer(space, "16 00 00 00 F2 00 25"), expect("96"));
        EXPECT_EQ(answer(space, "17 00 00 00 01 00 00 00 01 02 00 01"), expect("97"));
    }
}

TEST_F(Exceptions, StructuralErrorsDoNotReachTheRegisterSpace) {
    refusing_space space{exception_code::server_device_failure};
    EXPECT_EQ(answer(space, pdu(0x03, 0, 0)), "83 03");
    EXPECT_EQ(answer(space, "41"), "C1 01");
    EXPECT_EQ(answer(space, pdu(0x03, 0xFFFF, 2)), "83 02");
    EXPECT_EQ(space.calls, 0);
}

TEST_F(Exceptions, ProtectedRangeAndWriteGuard) {
    small.protect(table::holding_registers, 90, 10);
    small.protect(table::coils, 0, 10, exception_code::illegal_function);
    EXPECT_EQ(answer(small, "06 00 5A 00 01"), "86 02");
    EXPECT_EQ(answer(small, pdu(0x10, 88, 3, register_tail(3, 6))), "90 02"); // touches 90
    EXPECT_EQ(small.registers(table::holding_registers)[88], 0);              // all or nothing
    EXPECT_EQ(answer(small, "06 00 59 00 01"), "06 00 59 00 01");
    EXPECT_EQ(answer(small, "05 00 09 FF 00"), "85 01");
    EXPECT_EQ(answer(small, "05 00 0A FF 00"), "05 00 0A FF 00");
    // Reads of protected ranges are fine.
    EXPECT_EQ(answer(small, pdu(0x03, 90, 1)), "03 02 00 00");

    // A per-client guard: only 10.0.0.5 may write.
    small.set_write_guard([](const client_info& c, table, std::uint16_t, std::size_t) -> refusal {
        if (c.address_v4 == 0x0A000005U) {
            return accepted;
        }
        return exception_code::illegal_function;
    });
    EXPECT_EQ(answer(small, "06 00 01 00 07"), "86 01");
    client_info writer = floc::modbus::test::loopback_client;
    writer.address_v4 = 0x0A000005U;
    EXPECT_EQ(answer(small, "06 00 01 00 07", {}, writer), "06 00 01 00 07");
    EXPECT_EQ(small.registers(table::holding_registers)[1], 7);
    // The guard is not asked for ranges that are protected anyway.
    EXPECT_EQ(answer(small, "06 00 5A 00 01", {}, writer), "86 02");
}

TEST_F(Exceptions, InputTablesAreNotWritable) {
    // There is no function code that writes discrete inputs or input registers (AppSpec §4.3);
    // the writes go to coils and holding registers, even where the tables are the same size.
    EXPECT_EQ(answer(small, "06 00 01 00 05"), "06 00 01 00 05");
    EXPECT_EQ(small.registers(table::input_registers)[1], 0);
    EXPECT_EQ(small.registers(table::holding_registers)[1], 5);
}

// --- Exception response encoding --------------------------------------------------------------

TEST(ExceptionEncoding, FunctionWithHighBitAndCode) {
    std::array<std::uint8_t, 2> out{};
    ASSERT_EQ(encode_exception(0x03, exception_code::server_device_busy, out), 2U);
    EXPECT_EQ(out[0], 0x83);
    EXPECT_EQ(out[1], 0x06);
    std::array<std::uint8_t, 1> small{};
    EXPECT_EQ(encode_exception(0x03, exception_code::server_device_busy, small), 0U);
}

TEST(ExceptionEncoding, NamesFromTheSpec) {
    EXPECT_EQ(to_string(exception_code::illegal_data_address), "illegal data address");
    EXPECT_EQ(to_string(exception_code::server_device_busy), "server device busy");
    EXPECT_EQ(function_name(0x17), "read/write multiple registers");
    EXPECT_EQ(function_name(0x41), "unknown function");
    EXPECT_TRUE(is_write_function(0x10));
    EXPECT_TRUE(is_write_function(0x17));
    EXPECT_FALSE(is_write_function(0x03));
    EXPECT_FALSE(is_write_function(0x2B));
    EXPECT_TRUE(is_exception_code(0x0B));
    EXPECT_FALSE(is_exception_code(0x09));
}

} // namespace
