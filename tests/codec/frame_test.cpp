// The MBAP framing of a TCP byte stream (TCPGuide = MODBUS Messaging on TCP/IP Implementation
// Guide V1.0b): split and coalesced frames, the protocol-id rule and impossible lengths.
#include "hex.hpp"

#include "floc/modbus/frame.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <vector>

namespace {

using namespace floc::modbus;
using floc::modbus::test::bytes;
using floc::modbus::test::hex;

const std::vector<std::uint8_t> read_request = bytes("00 01 00 00 00 06 FF 03 00 6B 00 03");

TEST(Frame, EveryShorterPrefixNeedsMore) {
    // TCPGuide §3.1.2: the length field is what lets a receiver find the frame's end in a stream
    // that TCP may split anywhere.
    for (std::size_t n = 0; n < read_request.size(); ++n) {
        const decoded_frame f = decode_frame(std::span{read_request}.first(n));
        EXPECT_EQ(f.status, decode_status::need_more) << "prefix of " << n << " bytes";
        EXPECT_GT(f.size, n) << "prefix of " << n << " bytes";
        EXPECT_LE(f.size, read_request.size()) << "prefix of " << n << " bytes";
    }
    EXPECT_EQ(decode_frame(std::span{read_request}.first(6)).size, read_request.size());
}

TEST(Frame, SplitAtEveryPositionThroughTheBuffer) {
    for (std::size_t cut = 1; cut < read_request.size(); ++cut) {
        frame_buffer buffer;
        auto space = buffer.free_space();
        std::copy_n(read_request.begin(), cut, space.begin());
        buffer.commit(cut);
        ASSERT_EQ(buffer.next().status, decode_status::need_more) << "cut at " << cut;
        space = buffer.free_space();
        std::copy(read_request.begin() + static_cast<std::ptrdiff_t>(cut), read_request.end(),
                  space.begin());
        buffer.commit(read_request.size() - cut);
        const decoded_frame f = buffer.next();
        ASSERT_EQ(f.status, decode_status::complete) << "cut at " << cut;
        EXPECT_EQ(hex(f.pdu), "03 00 6B 00 03");
        buffer.consume(f.size);
        EXPECT_EQ(buffer.buffered(), 0U);
    }
}

TEST(Frame, OneByteAtATime) {
    frame_buffer buffer;
    std::size_t complete = 0;
    for (const std::uint8_t b : read_request) {
        buffer.free_space()[0] = b;
        buffer.commit(1);
        const decoded_frame f = buffer.next();
        if (f.status == decode_status::complete) {
            ++complete;
            buffer.consume(f.size);
        } else {
            EXPECT_EQ(f.status, decode_status::need_more);
        }
    }
    EXPECT_EQ(complete, 1U);
}

TEST(Frame, CoalescedFramesComeOutInOrder) {
    // TCPGuide §4.2.1: requests may be pipelined; several can arrive in one segment.
    std::vector<std::uint8_t> stream;
    for (std::uint16_t tid = 1; tid <= 5; ++tid) {
        auto frame = bytes("00 00 00 00 00 06 01 04 00 00 00 01");
        frame[0] = static_cast<std::uint8_t>(tid >> 8U);
        frame[1] = static_cast<std::uint8_t>(tid & 0xFFU);
        stream.insert(stream.end(), frame.begin(), frame.end());
    }
    stream.push_back(0x00); // the first byte of a sixth frame
    frame_buffer buffer;
    auto space = buffer.free_space();
    std::copy(stream.begin(), stream.end(), space.begin());
    buffer.commit(stream.size());
    for (std::uint16_t tid = 1; tid <= 5; ++tid) {
        const decoded_frame f = buffer.next();
        ASSERT_EQ(f.status, decode_status::complete);
        EXPECT_EQ(f.header.transaction_id, tid);
        EXPECT_EQ(f.header.unit_id, 0x01);
        buffer.consume(f.size);
    }
    EXPECT_EQ(buffer.next().status, decode_status::need_more);
    EXPECT_EQ(buffer.buffered(), 1U);
}

TEST(Frame, NonModbusProtocolIdIsDiscardedWhole) {
    // TCPGuide §4.4.2.2: a protocol id other than 0 -> the indication is discarded, no reply;
    // the stream goes on with the next frame.
    const auto stream =
        bytes("00 07 00 01 00 06 FF 03 00 00 00 01  00 08 00 00 00 06 FF 03 00 00 00 01");
    const decoded_frame f = decode_frame(stream);
    EXPECT_EQ(f.status, decode_status::malformed);
    EXPECT_EQ(f.action, frame_action::discard);
    EXPECT_EQ(f.error, frame_error::protocol_id);
    EXPECT_EQ(f.header.protocol_id, 0x0001);
    EXPECT_EQ(f.size, 12U);
    const decoded_frame g = decode_frame(std::span{stream}.subspan(f.size));
    ASSERT_EQ(g.status, decode_status::complete);
    EXPECT_EQ(g.header.transaction_id, 0x0008);
}

TEST(Frame, NonModbusProtocolIdWaitsForItsWholeFrame) {
    const auto frame = bytes("00 07 12 34 00 06 FF 03 00 00 00 01");
    EXPECT_EQ(decode_frame(std::span{frame}.first(10)).status, decode_status::need_more);
    EXPECT_EQ(decode_frame(frame).action, frame_action::discard);
}

TEST(Frame, ImpossibleLengthsCloseTheConnection) {
    // The length counts unit id + PDU: 2..254 (a function code at least, a 253-byte PDU at most,
    // TCPGuide §3.1.3 and AppSpec §4.1). Outside that the stream cannot be framed again.
    struct row {
        const char* header;
        frame_error error;
    };
    for (const row& r : {row{"00 01 00 00 00 00", frame_error::length_too_short},
                         row{"00 01 00 00 00 01", frame_error::length_too_short},
                         row{"00 01 00 00 00 FF", frame_error::length_too_long},
                         row{"00 01 00 00 FF FF", frame_error::length_too_long}}) {
        const decoded_frame f = decode_frame(bytes(r.header));
        EXPECT_EQ(f.status, decode_status::malformed) << r.header;
        EXPECT_EQ(f.action, frame_action::close_connection) << r.header;
        EXPECT_EQ(f.error, r.error) << r.header;
    }
}

TEST(Frame, LengthBoundsThemselvesAreValid) {
    // Length 2: unit id + function code only. Length 254: a PDU of the maximum 253 bytes.
    EXPECT_EQ(decode_frame(bytes("00 01 00 00 00 02 FF 07")).status, decode_status::complete);
    std::vector<std::uint8_t> longest = bytes("00 01 00 00 00 FE FF");
    longest.resize(mbap_size + max_pdu_size, 0x10);
    const decoded_frame f = decode_frame(longest);
    ASSERT_EQ(f.status, decode_status::complete);
    EXPECT_EQ(f.pdu.size(), max_pdu_size);
    EXPECT_EQ(f.size, max_adu_size);
}

TEST(Frame, EncodeComputesLengthFromPdu) {
    std::array<std::uint8_t, max_adu_size> out{};
    const auto pdu = bytes("03 06 02 2B 00 00 00 64");
    const std::size_t n = encode_frame(0x0001, 0xFF, pdu, out);
    EXPECT_EQ(hex(std::span{out}.first(n)), "00 01 00 00 00 09 FF 03 06 02 2B 00 00 00 64");
}

TEST(Frame, EncodeRefusesWhatDoesNotFit) {
    std::array<std::uint8_t, 8> small{};
    EXPECT_EQ(encode_frame(1, 1, bytes("03 02 00 01"), small), 0U);
    std::array<std::uint8_t, max_adu_size + 1> out{};
    const std::vector<std::uint8_t> too_long(max_pdu_size + 1, 0x03);
    EXPECT_EQ(encode_frame(1, 1, too_long, out), 0U);
    EXPECT_EQ(encode_frame(1, 1, {}, out), 0U);
}

TEST(Frame, BufferCompactsAndKeepsRoomForAFullFrame) {
    frame_buffer buffer;
    std::size_t frames = 0;
    // Many frames pushed through in chunks of 7 bytes: compaction must keep them intact.
    std::vector<std::uint8_t> stream;
    for (int i = 0; i < 100; ++i) {
        const auto frame = bytes("00 05 00 00 00 06 11 03 00 10 00 02");
        stream.insert(stream.end(), frame.begin(), frame.end());
    }
    for (std::size_t at = 0; at < stream.size(); at += 7) {
        const std::size_t n = std::min<std::size_t>(7, stream.size() - at);
        auto space = buffer.free_space();
        ASSERT_GE(space.size(), max_adu_size);
        std::copy_n(stream.begin() + static_cast<std::ptrdiff_t>(at), n, space.begin());
        buffer.commit(n);
        for (decoded_frame f = buffer.next(); f.status == decode_status::complete;
             f = buffer.next()) {
            EXPECT_EQ(hex(f.pdu), "03 00 10 00 02");
            buffer.consume(f.size);
            ++frames;
        }
    }
    EXPECT_EQ(frames, 100U);
}

} // namespace
