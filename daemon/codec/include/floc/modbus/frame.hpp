// Framing of Modbus/TCP: the MBAP header, an incremental decoder of a byte stream and the ADU
// encoder (TCP guide V1.0b §3.1.3, §4.4.2). Pure: no sockets, no clocks.
#pragma once

#include "floc/modbus/protocol.hpp"

#include <array>
#include <cstddef>
#include <cstdint>
#include <span>
#include <string_view>

namespace floc::modbus {

// The MBAP header as read from the wire (all fields big-endian there).
struct mbap_header {
    std::uint16_t transaction_id = 0; // chosen by the client, echoed by the server
    std::uint16_t protocol_id = 0;    // 0 is Modbus; anything else is discarded
    std::uint16_t length = 0;         // bytes that follow the length field: unit id + PDU
    std::uint8_t unit_id = 0;         // echoed by the server
};

// What the decoder found at the front of a byte stream.
enum class decode_status : std::uint8_t {
    complete,  // a whole ADU is there: `size` bytes, its header and PDU
    need_more, // the front is an incomplete ADU: at least `size` bytes are needed in total
    malformed, // the front is not a valid Modbus ADU; `action` says what to do with it
};

// What to do with a malformed frame.
enum class frame_action : std::uint8_t {
    none,    // not malformed
    discard, // skip its `size` bytes and carry on with the next frame (TCP guide §4.4.2.2)
    close_connection, // the stream cannot be framed any more: drop the connection
};

// Why a frame is malformed.
enum class frame_error : std::uint8_t {
    none,
    protocol_id,      // protocol id is not 0: the indication is discarded, no reply
    length_too_short, // MBAP length below 2: no room for a function code
    length_too_long,  // MBAP length above 254: the PDU would exceed 253 bytes
};

// The outcome of decode_frame().
struct decoded_frame {
    decode_status status = decode_status::need_more;
    frame_action action = frame_action::none;
    frame_error error = frame_error::none;
    std::size_t size = mbap_size - 1;  // complete, discard: the frame's bytes; need_more: the
                                       // bytes needed in all; close_connection: all given
    mbap_header header;                // valid for complete and discard
    std::span<const std::uint8_t> pdu; // complete: the function code and its data
};

// Looks at the front of `bytes` (a TCP stream, possibly split or coalesced anywhere) and
// reports one complete ADU, the need for more bytes, or a malformed frame.
[[nodiscard]] decoded_frame decode_frame(std::span<const std::uint8_t> bytes);

// Writes the MBAP header and `pdu` into `out`; returns the ADU size, or 0 when `out` is too small
// or `pdu` is empty or longer than 253 bytes. The length field is computed from `pdu`.
[[nodiscard]] std::size_t encode_frame(std::uint16_t transaction_id, std::uint8_t unit_id,
                                       std::span<const std::uint8_t> pdu,
                                       std::span<std::uint8_t> out);

// A short description of `error` for logs ("MBAP length above 254").
[[nodiscard]] std::string_view to_string(frame_error error);

// A receive buffer for one connection: a socket reads into free_space(), the owner takes the
// frames out with next() and consume(). Holds at least one maximal ADU plus a read's worth.
class frame_buffer {
public:
    static constexpr std::size_t capacity = 4 * max_adu_size;

    frame_buffer() = default;
    frame_buffer(const frame_buffer&) = delete;
    frame_buffer& operator=(const frame_buffer&) = delete;

    // Moves the unread bytes to the front and returns the space behind them (empty only when
    // `capacity` bytes are unread; a reader that consumes its complete frames never sees that).
    [[nodiscard]] std::span<std::uint8_t> free_space();
    // Records that `n` bytes were written into the span free_space() returned.
    void commit(std::size_t n);
    // Decodes the frame at the front of the unread bytes; spans stay valid until consume().
    [[nodiscard]] decoded_frame next() const;
    // Drops `n` bytes from the front (the size of a complete or discarded frame).
    void consume(std::size_t n);
    // Unread bytes.
    [[nodiscard]] std::size_t buffered() const { return end_ - begin_; }

private:
    std::array<std::uint8_t, capacity> bytes_{};
    std::size_t begin_ = 0;
    std::size_t end_ = 0;
};

} // namespace floc::modbus
