// Read Device Identification, FC 43 / MEI 14 (MODBUS Application Protocol Specification
// V1.1b3 §6.21): stream and individual access, conformity level, "more follows" when the
// objects do not fit one response, unknown object ids, and illegal read device id codes.
#include "answer.hpp"

#include "floc/modbus/register_bank.hpp"

#include <gtest/gtest.h>

#include <string>

namespace {

using namespace floc::modbus;
using floc::modbus::test::answer;
using floc::modbus::test::bytes;

struct parsed_objects {
    std::uint8_t code = 0;
    std::uint8_t conformity = 0;
    std::uint8_t more_follows = 0;
    std::uint8_t next_object = 0;
    std::vector<std::pair<std::uint8_t, std::string>> objects;
};

// Decodes a device identification response PDU; fails the test on a malformed one.
parsed_objects parse(const std::string& response_hex) {
    const auto r = bytes(response_hex);
    parsed_objects p;
    EXPECT_GE(r.size(), 7U);
    if (r.size() < 7) {
        return p;
    }
    EXPECT_EQ(r[0], 0x2B);
    EXPECT_EQ(r[1], 0x0E);
    EXPECT_LE(r.size(), max_pdu_size);
    p.code = r[2];
    p.conformity = r[3];
    p.more_follows = r[4];
    p.next_object = r[5];
    std::size_t at = 7;
    for (unsigned i = 0; i < r[6]; ++i) {
        EXPECT_LE(at + 2, r.size());
        if (at + 2 > r.size()) {
            return p;
        }
        const std::size_t len = r[at + 1];
        EXPECT_LE(at + 2 + len, r.size());
        if (at + 2 + len > r.size()) {
            return p;
        }
        p.objects.emplace_back(r[at],
                               std::string(r.begin() + static_cast<std::ptrdiff_t>(at + 2),
                                           r.begin() + static_cast<std::ptrdiff_t>(at + 2 + len)));
        at += 2 + len;
    }
    EXPECT_EQ(at, r.size()) << "bytes after the last object";
    return p;
}

device_identity basic_identity() {
    device_identity id;
    id.vendor_name = "floc project";
    id.product_code = "FLOCD";
    id.revision = "0.1";
    return id;
}

class DeviceId : public ::testing::Test {
protected:
    register_bank bank{bank_sizes{}};
};

TEST_F(DeviceId, BasicStream) {
    const parsed_objects p = parse(answer(bank, "2B 0E 01 00", basic_identity()));
    EXPECT_EQ(p.code, 0x01);
    EXPECT_EQ(p.conformity, 0x81); // basic, with individual access
    EXPECT_EQ(p.more_follows, 0x00);
    EXPECT_EQ(p.next_object, 0x00);
    ASSERT_EQ(p.objects.size(), 3U);
    EXPECT_EQ(p.objects[0], std::make_pair(std::uint8_t{0}, std::string{"floc project"}));
    EXPECT_EQ(p.objects[1], std::make_pair(std::uint8_t{1}, std::string{"FLOCD"}));
    EXPECT_EQ(p.objects[2], std::make_pair(std::uint8_t{2}, std::string{"0.1"}));
}

TEST_F(DeviceId, RegularStreamSkipsEmptyOptionalObjects) {
    device_identity id = basic_identity();
    id.product_name = "floc advisory service";
    id.application_name = "Marrowby WRW advice";
    const parsed_objects p = parse(answer(bank, "2B 0E 02 00", id));
    EXPECT_EQ(p.conformity, 0x82); // regular, with individual access
    ASSERT_EQ(p.objects.size(), 5U);
    EXPECT_EQ(p.objects[3].first, 0x04);
    EXPECT_EQ(p.objects[3].second, "floc advisory service");
    EXPECT_EQ(p.objects[4].first, 0x06);
    // A basic stream of the same device still stops after object 2.
    EXPECT_EQ(parse(answer(bank, "2B 0E 01 00", id)).objects.size(), 3U);
}

TEST_F(DeviceId, ExtendedStreamOfARegularDeviceIsServedAtItsLevel) {
    // A request for a higher level than the device has is answered at the device's level.
    device_identity id = basic_identity();
    id.vendor_url = "https://floc.invalid/";
    const parsed_objects p = parse(answer(bank, "2B 0E 03 00", id));
    EXPECT_EQ(p.code, 0x03);
    EXPECT_EQ(p.conformity, 0x82);
    ASSERT_EQ(p.objects.size(), 4U);
    EXPECT_EQ(p.objects[3].first, 0x03);
    EXPECT_EQ(p.more_follows, 0x00);
}

TEST_F(DeviceId, StreamFromAGivenObject) {
    const parsed_objects p = parse(answer(bank, "2B 0E 01 01", basic_identity()));
    ASSERT_EQ(p.objects.size(), 2U);
    EXPECT_EQ(p.objects[0].first, 0x01);
    EXPECT_EQ(p.objects[1].first, 0x02);
}

TEST_F(DeviceId, StreamWithUnknownObjectRestartsAtZero) {
    // §6.21: with stream access, an object id that matches no known object is answered as if
    // object 0 had been asked for.
    for (const char* request : {"2B 0E 01 05", "2B 0E 01 7F", "2B 0E 02 04", "2B 0E 01 80",
                                "2B 0E 01 FF", "2B 0E 01 03"}) {
        const parsed_objects p = parse(answer(bank, request, basic_identity()));
        ASSERT_EQ(p.objects.size(), 3U) << request;
        EXPECT_EQ(p.objects[0].first, 0x00) << request;
    }
}

TEST_F(DeviceId, IndividualAccess) {
    device_identity id = basic_identity();
    id.model_name = "edge";
    const parsed_objects p = parse(answer(bank, "2B 0E 04 02", id));
    EXPECT_EQ(p.code, 0x04);
    EXPECT_EQ(p.more_follows, 0x00); // must be 00 for individual access
    EXPECT_EQ(p.next_object, 0x00);
    ASSERT_EQ(p.objects.size(), 1U);
    EXPECT_EQ(p.objects[0], std::make_pair(std::uint8_t{2}, std::string{"0.1"}));
    const parsed_objects m = parse(answer(bank, "2B 0E 04 05", id));
    ASSERT_EQ(m.objects.size(), 1U);
    EXPECT_EQ(m.objects[0].second, "edge");
}

TEST_F(DeviceId, IndividualAccessToUnknownObjectIs02) {
    // §6.21: individual access to an object id the device does not have -> exception 02.
    EXPECT_EQ(answer(bank, "2B 0E 04 03", basic_identity()), "AB 02");
    EXPECT_EQ(answer(bank, "2B 0E 04 07", basic_identity()), "AB 02");
    EXPECT_EQ(answer(bank, "2B 0E 04 80", basic_identity()), "AB 02");
}

TEST_F(DeviceId, IllegalReadDeviceIdCodeIs03) {
    EXPECT_EQ(answer(bank, "2B 0E 00 00", basic_identity()), "AB 03");
    EXPECT_EQ(answer(bank, "2B 0E 05 00", basic_identity()), "AB 03");
    EXPECT_EQ(answer(bank, "2B 0E FF 00", basic_identity()), "AB 03");
    // The code is checked before the object id.
    EXPECT_EQ(answer(bank, "2B 0E 05 80", basic_identity()), "AB 03");
}

TEST_F(DeviceId, MoreFollowsWhenObjectsDoNotFit) {
    // Seven objects of 100 bytes: at most two fit in the 253-byte PDU after its 7-byte header.
    device_identity id;
    id.vendor_name = std::string(100, 'v');
    id.product_code = std::string(100, 'p');
    id.revision = std::string(100, 'r');
    id.vendor_url = std::string(100, 'u');
    id.product_name = std::string(100, 'n');
    id.model_name = std::string(100, 'm');
    id.application_name = std::string(100, 'a');

    std::vector<std::uint8_t> seen;
    std::uint8_t next = 0;
    for (int round = 0; round < 10; ++round) {
        char request[16];
        std::snprintf(request, sizeof request, "2B 0E 02 %02X", next);
        const parsed_objects p = parse(answer(bank, request, id));
        EXPECT_FALSE(p.objects.empty());
        for (const auto& [object, value] : p.objects) {
            seen.push_back(object);
            EXPECT_EQ(value.size(), 100U); // never split
        }
        if (p.more_follows == 0x00) {
            EXPECT_EQ(p.next_object, 0x00);
            break;
        }
        EXPECT_EQ(p.more_follows, 0xFF);
        EXPECT_EQ(p.next_object, static_cast<std::uint8_t>(p.objects.back().first + 1));
        next = p.next_object;
    }
    EXPECT_EQ(seen, (std::vector<std::uint8_t>{0, 1, 2, 3, 4, 5, 6}));
}

TEST_F(DeviceId, LongestObjectFitsAlone) {
    device_identity id = basic_identity();
    id.product_name = std::string(max_identity_object_size, 'x');
    EXPECT_FALSE(identity_error(id).has_value());
    const std::string r = answer(bank, "2B 0E 04 04", id);
    EXPECT_EQ(bytes(r).size(), max_pdu_size);
    const parsed_objects p = parse(r);
    ASSERT_EQ(p.objects.size(), 1U);
    EXPECT_EQ(p.objects[0].second.size(), max_identity_object_size);
}

TEST_F(DeviceId, IdentityChecks) {
    EXPECT_FALSE(identity_error(basic_identity()).has_value());
    device_identity empty_vendor = basic_identity();
    empty_vendor.vendor_name.clear();
    ASSERT_TRUE(identity_error(empty_vendor).has_value());
    EXPECT_NE(identity_error(empty_vendor)->find("vendor name is empty"), std::string::npos);
    device_identity too_long = basic_identity();
    too_long.model_name = std::string(245, 'x');
    ASSERT_TRUE(identity_error(too_long).has_value());
    EXPECT_NE(identity_error(too_long)->find("245 bytes; expected at most 244"), std::string::npos);
}

} // namespace
