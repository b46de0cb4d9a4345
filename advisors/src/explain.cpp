#include "explain.hpp"

namespace floc::advisors::detail {

std::string unusable_inputs(std::initializer_list<named_reading> readings) {
    std::string out;
    for (const named_reading& n : readings) {
        if (n.r->usable()) {
            continue;
        }
        if (!out.empty()) {
            out += ", ";
        }
        out += n.name;
        out += ' ';
        out += n.r->quality == signal_quality::good ? std::string_view{"not a number"}
                                                    : to_string(n.r->quality);
    }
    return out.empty() ? std::string{"inputs unusable"} : out;
}

value_text quantity_text(units::quantity q, units::unit_system system) {
    return [q, system](double v) { return text(v, q, system); };
}

std::string change(bool had_previous, double previous, double now, const value_text& write) {
    const std::string after = write(now);
    if (!had_previous) {
        return after;
    }
    const std::string before = write(previous);
    if (before == after) {
        return "unchanged at " + after;
    }
    return std::string{now > previous ? "raised " : "lowered "} + before + " -> " + after;
}

std::string held(std::string_view why, std::string_view what, const held_output& h,
                 const output_memory& m, double now_s, double hold_for_s, const value_text& write) {
    std::string out{why};
    if (h.quality == advice_quality::held) {
        out += "; holding the last good " + std::string{what} + " " + write(h.value) + " (" +
               text_duration(now_s - m.good_at_s) + " of " + text_duration(hold_for_s) + ")";
    } else if (m.has_good) {
        out += "; fallback " + std::string{what} + " " + write(h.value) + " (no good input for " +
               text_duration(now_s - m.good_at_s) + ", hold " + text_duration(hold_for_s) + ")";
    } else {
        out += "; fallback " + std::string{what} + " " + write(h.value) + " (no good advice yet)";
    }
    return out;
}

} // namespace floc::advisors::detail
