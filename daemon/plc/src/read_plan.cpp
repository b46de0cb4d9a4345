#include "floc/plc/read_plan.hpp"

#include <algorithm>
#include <map>
#include <tuple>

namespace floc::plc {

std::vector<read_request> plan_reads(const config::plant_config& cfg, std::size_t plc_index) {
    const config::plc_connection& plc = cfg.plcs.at(plc_index);
    // Tags of this PLC, sorted by (function, period, address).
    std::vector<std::size_t> order;
    for (std::size_t i = 0; i < cfg.tags.size(); ++i) {
        if (cfg.tags[i].plc == plc_index) {
            order.push_back(i);
        }
    }
    const auto period_of = [&](std::size_t i) {
        return cfg.tags[i].poll_period_s.value_or(plc.poll_period_s);
    };
    std::sort(order.begin(), order.end(), [&](std::size_t a, std::size_t b) {
        const auto& ta = cfg.tags[a];
        const auto& tb = cfg.tags[b];
        return std::tuple{ta.function, period_of(a), ta.address, a} <
               std::tuple{tb.function, period_of(b), tb.address, b};
    });

    std::vector<read_request> out;
    for (const std::size_t i : order) {
        const config::tag& t = cfg.tags[i];
        const bool bits = t.function == config::read_function::coils ||
                          t.function == config::read_function::discrete_inputs;
        const std::uint32_t limit = bits ? max_bits_per_request
                                         : std::min<std::uint32_t>(plc.max_registers_per_read,
                                                                   max_registers_per_request);
        const std::uint32_t end = std::uint32_t{t.address} + t.width();
        if (!out.empty()) {
            read_request& last = out.back();
            const std::uint32_t last_end = std::uint32_t{last.address} + last.count;
            const bool same_kind = last.function == t.function && last.period_s == period_of(i);
            const bool close = t.address <= last_end + plc.max_gap_registers;
            const std::uint32_t merged_end = std::max(last_end, end);
            if (same_kind && close && merged_end - last.address <= limit) {
                last.count = static_cast<std::uint16_t>(merged_end - last.address);
                last.tags.push_back(i);
                continue;
            }
        }
        out.push_back(read_request{t.function, t.address, static_cast<std::uint16_t>(t.width()),
                                   period_of(i), {i}});
    }
    return out;
}

} // namespace floc::plc
