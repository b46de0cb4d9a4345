// Register words -> engineering value -> canonical unit, for one tag. Pure; floc packs and
// unpacks 32-bit values itself (Debian's libmodbus float setters are byte-swapped).
#pragma once

#include "floc/config/config.hpp"

#include <array>
#include <cstdint>
#include <span>

namespace floc::plc {

// The 32-bit pattern of two registers in the given word order. `first` is the register at the
// tag's address. abcd: first holds the high word; cdab: words swapped; badc: bytes swapped in
// each word; dcba: both.
[[nodiscard]] std::uint32_t join_words(std::uint16_t first, std::uint16_t second,
                                       config::word_order order);
// The inverse: two registers (first, second) for a 32-bit pattern.
[[nodiscard]] std::array<std::uint16_t, 2> split_words(std::uint32_t value, config::word_order order);

// The tag's value in the canonical unit of its quantity. `words` starts at the tag's address
// and holds at least tag.width() registers. NaN and infinite floats come back as they are; the
// conditioning marks them bad.
[[nodiscard]] double decode_registers(const config::tag& tag, std::span<const std::uint16_t> words);

// An engineering value of the tag (after scale and offset, in the tag's unit) in the canonical
// unit of its quantity: the last step of decode_registers, also used by flocd replay.
[[nodiscard]] double to_canonical(const config::tag& tag, double engineering);

// A bit tag (function 1 or 2): 0 or 1.
[[nodiscard]] double decode_bit(bool bit);

} // namespace floc::plc
