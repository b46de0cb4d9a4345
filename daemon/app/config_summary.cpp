#include "config_summary.hpp"

#include "floc/config/register_layout.hpp"

#include <set>

namespace floc::app {
namespace {

std::string plural(std::size_t n, const std::string& one, const std::string& many) {
    return std::to_string(n) + " " + (n == 1 ? one : many);
}

std::string block_text(const config::register_block& b) {
    if (b.count == 0) {
        return "empty";
    }
    return std::to_string(b.first) + ".." + std::to_string(b.end() - 1);
}

} // namespace

std::string config_summary(const config::plant_config& cfg) {
    using units::canonical_unit;
    using units::quantity;
    std::string out;
    out += "config OK: " + cfg.source_file + "\n";
    out += "  site        " + cfg.site.name + "\n";
    out += "  units       " +
           std::string{cfg.display.system == units::unit_system::si ? "SI" : "US customary"} +
           " on registers and screens (flow in " + std::string{cfg.display.unit_for(quantity::flow).symbol} +
           ", length in " + std::string{cfg.display.unit_for(quantity::length).symbol} +
           ", temperature in " + std::string{cfg.display.unit_for(quantity::temperature).symbol} + ")\n";

    std::set<std::string> trains;
    double aerobic_m3 = 0.0;
    double anoxic_m3 = 0.0;
    for (const auto& z : cfg.zones) {
        trains.insert(z.train);
        (z.kind == config::zone_kind::aerobic ? aerobic_m3 : anoxic_m3) += z.volume_m3;
    }
    double clarifier_m2 = 0.0;
    for (const auto& c : cfg.clarifiers) {
        clarifier_m2 += c.area_m2;
    }
    const units::unit& vol = cfg.display.unit_for(quantity::volume);
    const units::unit& area = cfg.display.unit_for(quantity::area);
    out += "  plant       " + plural(trains.size(), "train", "trains") + ", " +
           plural(cfg.zones.size(), "zone", "zones") + " (aerobic " + units::format(aerobic_m3, vol) +
           ", anoxic/anaerobic " + units::format(anoxic_m3, vol) + "), " +
           plural(cfg.clarifiers.size(), "clarifier", "clarifiers") + " (" +
           units::format(clarifier_m2, area) + ")\n";
    for (std::size_t i = 0; i < cfg.plcs.size(); ++i) {
        const auto& p = cfg.plcs[i];
        std::size_t n = 0;
        for (const auto& g : cfg.tags) {
            n += g.plc == i ? 1U : 0U;
        }
        out += "  plc         " + p.name + " at " + p.host + ":" + std::to_string(p.port) + " unit " +
               std::to_string(p.unit_id) + ", " + plural(n, "tag", "tags") + ", every " +
               units::format(p.poll_period_s, canonical_unit(quantity::duration)) + " (read only)\n";
    }
    out += "  lab entries " + std::to_string(cfg.lab.size()) + "\n";
    out += "  advisors    " + plural(cfg.aeration.size(), "aeration", "aeration") + ", " +
           plural(cfg.recycle.size(), "recycle", "recycle") + ", " + plural(cfg.ras.size(), "RAS", "RAS") +
           ", " + plural(cfg.waste.size(), "waste", "waste") + "\n";
    out += "  hmi server  " + cfg.hmi.bind + ":" + std::to_string(cfg.hmi.port) + ", at most " +
           std::to_string(cfg.hmi.max_connections) + " clients, allow";
    for (const auto& n : cfg.hmi.allow) {
        out += " " + config::format_network(n);
    }
    out += "\n  registers  ";
    for (const auto& b : config::register_blocks(cfg)) {
        out += " " + std::string{b.name.substr(0, b.name.size() - 3)} + " " + block_text(b);
    }
    out += "\n  storage     state in " + cfg.storage.state_dir + ", journal " + cfg.storage.journal + "\n";
    out += "  clock       " +
           std::string{cfg.clock.source == config::clock_source::system ? "system clock"
                                                                         : "plant time from tag " + cfg.clock.tag.name} +
           "\n";
    return out;
}

} // namespace floc::app
