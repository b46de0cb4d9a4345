// Checks that need the whole file: PLC register overlaps and the advisory register layout.
#include "floc/config/register_layout.hpp"
#include "loader.hpp"

#include <algorithm>

namespace floc::config::detail {
namespace {

std::string span_text(std::uint32_t first, std::uint32_t count) {
    return count == 1 ? std::to_string(first)
                      : std::to_string(first) + ".." + std::to_string(first + count - 1);
}

void check_tag_overlaps(loader& l) {
    const auto path_of = [&](const tag& g) {
        return "tag[" + std::to_string(&g - l.cfg.tags.data()) + "].address";
    };
    std::vector<const tag*> sorted;
    sorted.reserve(l.cfg.tags.size());
    for (const tag& g : l.cfg.tags) {
        sorted.push_back(&g);
    }
    std::sort(sorted.begin(), sorted.end(), [](const tag* a, const tag* b) {
        if (a->plc != b->plc) {
            return a->plc < b->plc;
        }
        if (a->function != b->function) {
            return a->function < b->function;
        }
        if (a->address != b->address) {
            return a->address < b->address;
        }
        return a->at.line < b->at.line;
    });
    for (std::size_t i = 0; i < sorted.size(); ++i) {
        const tag& a = *sorted[i];
        const std::uint32_t a_end = std::uint32_t{a.address} + a.width();
        if (a_end > register_space) {
            l.diags.error(a.address_at, path_of(a),
                          "registers " + span_text(a.address, a.width()) + " past address 65535",
                          "a tag that ends at address 65535 or below");
        }
        for (std::size_t j = i + 1; j < sorted.size(); ++j) {
            const tag& b = *sorted[j];
            if (b.plc != a.plc || b.function != a.function || b.address >= a_end) {
                break;
            }
            // Flags in one status word may share the register when their bits differ.
            if (a.bit && b.bit && a.width() == 1 && b.width() == 1 && *a.bit != *b.bit) {
                continue;
            }
            const tag& later = a.at.line <= b.at.line ? b : a;
            const tag& earlier = a.at.line <= b.at.line ? a : b;
            l.diags.error(later.address_at, path_of(later),
                          "registers " + span_text(later.address, later.width()) + " of tag " +
                              quote(later.name) + " (function " +
                              std::to_string(static_cast<int>(later.function)) +
                              "), overlapping tag " + quote(earlier.name) + " (" +
                              span_text(earlier.address, earlier.width()) + ", line " +
                              std::to_string(earlier.at.line) + ") on the same PLC",
                          "tags that do not share registers (different bits of one word are fine)");
        }
    }
}

void check_layout(loader& l) {
    const auto blocks = register_blocks(l.cfg);
    const register_layout_config& layout = l.cfg.hmi.layout;
    const source_pos table_at = layout.at.line > 0 ? layout.at : l.cfg.hmi.at;
    const auto where = [&](std::size_t i) {
        return layout.base_at.at(i).line > 0 ? layout.base_at.at(i) : table_at;
    };
    for (std::size_t i = 0; i < blocks.size(); ++i) {
        const register_block& a = blocks.at(i);
        const source_pos at = where(i);
        if (a.end() > register_space) {
            l.diags.error(at, "hmi_server.layout." + std::string{a.name},
                          "a block of registers " + span_text(a.first, a.count) + " past 65535",
                          "a base address that leaves room for " + std::to_string(a.count) +
                              " registers");
        }
        for (std::size_t j = i + 1; j < blocks.size(); ++j) {
            const register_block& b = blocks.at(j);
            if (a.overlaps(b)) {
                l.diags.error(where(j), "hmi_server.layout." + std::string{b.name},
                              "registers " + span_text(b.first, b.count) + " overlapping the " +
                                  std::string{a.name} + " block (" + span_text(a.first, a.count) + ")",
                              "register blocks that do not overlap");
            }
        }
    }
}

} // namespace

void check_registers(loader& l) {
    check_tag_overlaps(l);
    check_layout(l);
}

} // namespace floc::config::detail
