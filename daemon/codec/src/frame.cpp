#include "floc/modbus/frame.hpp"

#include "bytes.hpp"

#include <algorithm>
#include <cstring>

namespace floc::modbus {

using detail::get_u16;
using detail::put_u16;

decoded_frame decode_frame(std::span<const std::uint8_t> bytes) {
    decoded_frame f;
    // The length field ends at byte 6; until then nothing can be said about the frame.
    if (bytes.size() < mbap_size - 1) {
        f.size = mbap_size - 1;
        return f;
    }
    f.header.transaction_id = get_u16(bytes, 0);
    f.header.protocol_id = get_u16(bytes, 2);
    f.header.length = get_u16(bytes, 4);
    // An impossible length means the next frame's start is unknown: the stream is lost.
    if (f.header.length < min_mbap_length || f.header.length > max_mbap_length) {
        f.status = decode_status::malformed;
        f.action = frame_action::close_connection;
        f.error = f.header.length < min_mbap_length ? frame_error::length_too_short
                                                    : frame_error::length_too_long;
        f.size = bytes.size();
        return f;
    }
    const std::size_t total = mbap_size - 1 + f.header.length;
    if (bytes.size() < total) {
        f.size = total;
        return f;
    }
    f.size = total;
    f.header.unit_id = bytes[mbap_size - 1];
    if (f.header.protocol_id != 0) {
        // TCP guide §4.4.2.2: an indication with a protocol id other than Modbus is discarded.
        f.status = decode_status::malformed;
        f.action = frame_action::discard;
        f.error = frame_error::protocol_id;
        return f;
    }
    f.status = decode_status::complete;
    f.pdu = bytes.subspan(mbap_size, total - mbap_size);
    return f;
}

std::size_t encode_frame(std::uint16_t transaction_id, std::uint8_t unit_id,
                         std::span<const std::uint8_t> pdu, std::span<std::uint8_t> out) {
    if (pdu.empty() || pdu.size() > max_pdu_size || out.size() < mbap_size + pdu.size()) {
        return 0;
    }
    put_u16(out, 0, transaction_id);
    put_u16(out, 2, 0);
    put_u16(out, 4, static_cast<std::uint16_t>(pdu.size() + 1));
    out[6] = unit_id;
    std::copy(pdu.begin(), pdu.end(), out.begin() + mbap_size);
    return mbap_size + pdu.size();
}

std::string_view to_string(frame_error error) {
    switch (error) {
    case frame_error::none:
        return "no error";
    case frame_error::protocol_id:
        return "protocol id is not 0 (not Modbus)";
    case frame_error::length_too_short:
        return "MBAP length below 2";
    case frame_error::length_too_long:
        return "MBAP length above 254";
    }
    return "unknown frame error";
}

std::span<std::uint8_t> frame_buffer::free_space() {
    if (begin_ > 0) {
        std::memmove(bytes_.data(), bytes_.data() + begin_, end_ - begin_);
        end_ -= begin_;
        begin_ = 0;
    }
    return std::span<std::uint8_t>{bytes_}.subspan(end_);
}

void frame_buffer::commit(std::size_t n) {
    end_ = std::min(end_ + n, bytes_.size());
}

decoded_frame frame_buffer::next() const {
    return decode_frame(std::span<const std::uint8_t>{bytes_}.subspan(begin_, end_ - begin_));
}

void frame_buffer::consume(std::size_t n) {
    begin_ = std::min(begin_ + n, end_);
    if (begin_ == end_) {
        begin_ = end_ = 0;
    }
}

} // namespace floc::modbus
