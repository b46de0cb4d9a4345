#include "floc/registers/register_map.hpp"

#include "floc/advisors/advice.hpp"
#include "floc/conditioning/conditioning.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>

namespace floc::registers {
namespace {

using units::quantity;

std::string unit_text(const config::plant_config& cfg, quantity q) {
    if (q == quantity::dimensionless || q == quantity::state) {
        return "";
    }
    return std::string{cfg.display.unit_for(q).symbol};
}

class builder {
public:
    builder(const config::plant_config& cfg, register_map& map) : cfg_(cfg), map_(map) {}

    void add(std::uint32_t address, word_type type, std::string name, std::string unit,
             std::string meaning, double scale = 1.0, access acc = access::read_only) {
        map_.fields.push_back(field{static_cast<std::uint16_t>(address), type, acc, std::move(name),
                                    std::move(unit), scale, std::move(meaning)});
    }

    const config::plant_config& cfg_;
    register_map& map_;
};

double max_abs_display(const config::plant_config& cfg, quantity q, double a, double b) {
    const units::unit& u = cfg.display.unit_for(q);
    return std::max(std::abs(units::from_canonical(a, u)), std::abs(units::from_canonical(b, u)));
}

advice_slot slot_for(const config::plant_config& cfg, advisor_kind kind, std::string subject,
                     quantity q, double low, double high, std::array<figure_info, 6> figures) {
    advice_slot s;
    s.kind = kind;
    s.subject = std::move(subject);
    s.kind_of_value = q;
    s.int16_scale = int16_scale_for(max_abs_display(cfg, q, low, high));
    s.figures = std::move(figures);
    return s;
}

std::string kind_name(advisor_kind k) {
    switch (k) {
    case advisor_kind::aeration: return "aeration";
    case advisor_kind::recycle: return "recycle";
    case advisor_kind::ras: return "ras";
    case advisor_kind::waste: return "waste";
    }
    return "?";
}

std::string scale_text(double scale) {
    std::array<char, 32> buf{};
    std::snprintf(buf.data(), buf.size(), "%g", scale);
    return buf.data();
}

} // namespace

double int16_scale_for(double max_abs) {
    for (const double s : {1000.0, 100.0, 10.0, 1.0, 0.1, 0.01}) {
        if (max_abs * s <= 32000.0) {
            return s;
        }
    }
    return 0.001;
}

const field* register_map::find(std::uint16_t address) const {
    const auto it = std::find_if(fields.begin(), fields.end(), [&](const field& f) {
        return address >= f.address && address < f.address + f.width();
    });
    return it == fields.end() ? nullptr : &*it;
}

std::uint16_t register_map::status_base() const { return static_cast<std::uint16_t>(blocks[0].first); }
std::uint16_t register_map::advice_base(std::size_t slot) const {
    return static_cast<std::uint16_t>(blocks[1].first + slot * config::advice_slot_registers);
}
std::uint16_t register_map::input_base(std::size_t tag) const {
    return static_cast<std::uint16_t>(blocks[2].first + tag * config::input_slot_registers);
}
std::uint16_t register_map::lab_base(std::size_t entry) const {
    return static_cast<std::uint16_t>(blocks[3].first + entry * config::lab_slot_registers);
}

register_map build(const config::plant_config& cfg) {
    register_map map;
    map.blocks = config::register_blocks(cfg);
    builder b{cfg, map};

    // --- advice slots, in the order aeration, recycle, RAS, waste --------------------------
    // The value of each slot is what the advisor advises: a DO set point, a recycle ratio, a RAS
    // ratio (each with its flow among the figures), a daily waste flow.
    for (const auto& a : cfg.aeration) {
        map.advice.push_back(slot_for(cfg, advisor_kind::aeration, a.zone, quantity::concentration,
                                      a.params.min_g_per_m3, a.params.max_g_per_m3,
                                      {{{"measured_do", quantity::concentration},
                                        {"ammonia", quantity::concentration},
                                        {"nitrate", quantity::concentration},
                                        {"ammonia_target", quantity::concentration},
                                        {"flow_ratio", quantity::dimensionless},
                                        {"mode", quantity::dimensionless}}}));
    }
    for (const auto& r : cfg.recycle) {
        map.advice.push_back(slot_for(cfg, advisor_kind::recycle, r.train, quantity::dimensionless,
                                      r.params.min_ratio, r.params.max_ratio,
                                      {{{"recycle_flow", quantity::flow},
                                        {"anoxic_nitrate", quantity::concentration},
                                        {"nitrate_target", quantity::concentration},
                                        {"influent_flow", quantity::flow},
                                        {},
                                        {}}}));
    }
    for (const auto& r : cfg.ras) {
        map.advice.push_back(slot_for(cfg, advisor_kind::ras, r.train, quantity::dimensionless,
                                      r.params.min_ratio, r.params.max_ratio,
                                      {{{"ras_flow", quantity::flow},
                                        {"max_ras_flow", quantity::flow},
                                        {"thickening_margin", quantity::dimensionless},
                                        {"overflow_rate", quantity::velocity},
                                        {"solids_loading", quantity::solids_flux},
                                        {"blanket", quantity::length}}}));
    }
    for (const auto& w : cfg.waste) {
        map.advice.push_back(slot_for(cfg, advisor_kind::waste, w.train, quantity::flow,
                                      w.params.min_waste_m3_per_d, w.params.max_waste_m3_per_d,
                                      {{{"srt_actual_d", quantity::dimensionless},
                                        {"srt_target_d", quantity::dimensionless},
                                        {"min_aerobic_srt_d", quantity::dimensionless},
                                        {"food_to_microorganism_per_d", quantity::dimensionless},
                                        {"mlss", quantity::concentration},
                                        {"wastage", quantity::mass_rate}}}));
    }

    // --- status block ---------------------------------------------------------------------
    const std::uint32_t s = map.blocks[0].first;
    using so = std::uint16_t;
    b.add(s + status_offset::heartbeat, word_type::uint16, "status.heartbeat", "",
          "counts up once a second while flocd runs (wraps at 65535)");
    b.add(s + status_offset::daemon_state, word_type::uint16, "status.state", "",
          "0 starting, 1 running, 2 degraded (an input or advice is not good), 3 PLC down, 4 stopping");
    b.add(s + status_offset::uptime_s, word_type::uint32, "status.uptime", "s", "seconds since flocd started");
    b.add(s + status_offset::plant_time_s, word_type::uint32, "status.plant_time", "s",
          "plant time the advice is computed on (seconds; system clock or the PLC's time tag)");
    b.add(s + status_offset::units, word_type::uint16, "status.units", "", "0 SI, 1 US customary");
    b.add(s + status_offset::advisors, word_type::uint16, "status.advisors", "", "number of advice slots");
    b.add(s + status_offset::tags, word_type::uint16, "status.tags", "", "number of input slots");
    b.add(s + status_offset::lab_entries, word_type::uint16, "status.lab_entries", "", "number of lab slots");
    b.add(s + status_offset::layout, word_type::uint16, "status.layout_version", "",
          "version of this register layout (" + std::to_string(layout_version) + ")");
    b.add(s + status_offset::float_order, word_type::uint16, "status.float_word_order", "",
          "word order of float32 pairs: 0 abcd, 1 badc, 2 cdab, 3 dcba");
    for (so i = 0; i < status_offset::max_plcs; ++i) {
        const std::string plc = i < cfg.plcs.size() ? cfg.plcs[i].name : "(none)";
        b.add(s + status_offset::poll_age_s + i, word_type::uint16, "status.poll_age." + std::to_string(i), "s",
              "seconds since the last good read of PLC " + std::to_string(i) + " " + plc + " (65535 = never)");
    }
    for (so i = 0; i < status_offset::max_plcs; ++i) {
        const std::string plc = i < cfg.plcs.size() ? cfg.plcs[i].name : "(none)";
        b.add(s + status_offset::plc_link + i, word_type::uint16, "status.plc_link." + std::to_string(i), "",
              "PLC " + std::to_string(i) + " " + plc + ": 0 down, 1 connected");
    }
    b.add(s + status_offset::config_generation, word_type::uint16, "status.config_generation", "",
          "counts config reloads (SIGHUP) that took effect");
    b.add(s + status_offset::journal_status, word_type::uint16, "status.journal", "",
          "0 ok, 1 the advice journal cannot be written");
    b.add(s + status_offset::state_status, word_type::uint16, "status.state_file", "",
          "0 ok, 1 the state file cannot be written");

    // --- advice slots -------------------------------------------------------------------------
    for (std::size_t i = 0; i < map.advice.size(); ++i) {
        const advice_slot& a = map.advice[i];
        const std::uint32_t base = map.advice_base(i);
        const std::string p = "advice." + std::to_string(i) + ".";
        const std::string what = kind_name(a.kind) + " " + a.subject;
        const std::string u = unit_text(cfg, a.kind_of_value);
        b.add(base + advice_offset::value_int16, word_type::int16, p + "value_int16", u,
              what + ": advised value, scaled int16 (-32768 = none)", a.int16_scale);
        b.add(base + advice_offset::quality, word_type::uint16, p + "quality", "",
              what + ": 0 good, 1 held, 2 fallback, 3 unavailable");
        for (so r = 0; r < 4; ++r) {
            b.add(base + advice_offset::reason_1 + r, word_type::uint16, p + "reason." + std::to_string(r + 1), "",
                  what + ": reason code " + std::to_string(r + 1) + " (0 = none; see the advice reason table)");
        }
        b.add(base + advice_offset::age_s, word_type::uint16, p + "age", "s",
              what + ": seconds since the advice was computed (65535 = longer)");
        b.add(base + advice_offset::changes, word_type::uint16, p + "changes", "",
              what + ": counts changes of the advised value (wraps)");
        b.add(base + advice_offset::value, word_type::float32, p + "value", u, what + ": advised value");
        b.add(base + advice_offset::min, word_type::float32, p + "min", u, what + ": lower bound the advice is clamped to");
        b.add(base + advice_offset::max, word_type::float32, p + "max", u, what + ": upper bound the advice is clamped to");
        b.add(base + advice_offset::min_int16, word_type::int16, p + "min_int16", u, what + ": lower bound, scaled int16", a.int16_scale);
        b.add(base + advice_offset::max_int16, word_type::int16, p + "max_int16", u, what + ": upper bound, scaled int16", a.int16_scale);
        b.add(base + advice_offset::kind, word_type::uint16, p + "kind", "",
              what + ": advisor kind (1 aeration, 2 recycle, 3 RAS, 4 waste)");
        b.add(base + advice_offset::quantity, word_type::uint16, p + "quantity", "",
              what + ": quantity code of the value (" + std::to_string(static_cast<int>(a.kind_of_value)) + " = " +
                  std::string{units::quantity_name(a.kind_of_value)} + ")");
        b.add(base + advice_offset::scale_exponent, word_type::int16, p + "scale_exponent", "",
              what + ": int16 value = value * 10^exponent");
        for (so f = 0; f < a.figures.size(); ++f) {
            const figure_info& fig = a.figures.at(f);
            if (fig.name.empty()) {
                continue;
            }
            b.add(base + advice_offset::figures + 2U * f, word_type::float32, p + fig.name, unit_text(cfg, fig.kind),
                  what + ": " + fig.name);
        }
    }

    // --- inputs ---------------------------------------------------------------------------------
    for (std::size_t i = 0; i < cfg.tags.size(); ++i) {
        const config::tag& t = cfg.tags[i];
        const std::uint32_t base = map.input_base(i);
        const std::string p = "input." + t.name + ".";
        const std::string u = unit_text(cfg, t.quantity());
        const double scale = t.quantity() == quantity::state
                                 ? 1.0
                                 : int16_scale_for(max_abs_display(cfg, t.quantity(), t.valid_min, t.valid_max));
        b.add(base + input_offset::value_int16, word_type::int16, p + "value_int16", u,
              t.name + ": conditioned value, scaled int16 (-32768 = none)", scale);
        b.add(base + input_offset::quality, word_type::uint16, p + "quality", "", t.name + ": 0 good, 1 uncertain, 2 bad");
        b.add(base + input_offset::reason, word_type::uint16, p + "reason", "", t.name + ": input reason code (see the input reason table)");
        b.add(base + input_offset::age_s, word_type::uint16, p + "age", "s",
              t.name + ": seconds since the last good reading (65535 = never or longer)");
        b.add(base + input_offset::value, word_type::float32, p + "value", u, t.name + ": conditioned value");
        b.add(base + input_offset::raw, word_type::float32, p + "raw", u, t.name + ": latest raw reading");
    }

    // --- lab entries (the only writable block) -------------------------------------------------
    for (std::size_t i = 0; i < cfg.lab.size(); ++i) {
        const config::lab_entry& e = cfg.lab[i];
        const std::uint32_t base = map.lab_base(i);
        const std::string p = "lab." + e.name + ".";
        const std::string u = unit_text(cfg, e.kind);
        const double scale = int16_scale_for(max_abs_display(cfg, e.kind, e.valid_min, e.valid_max));
        const std::string checks =
            e.check ? " (a check reading of " + e.check->tag.name + ": see Probe checks)" : std::string{};
        b.add(base + lab_offset::value, word_type::float32, p + "value", u,
              e.name + ": lab value" + checks + "; writing both registers (function 16) enters a sample", 1.0,
              access::lab_write);
        b.add(base + lab_offset::value_int16, word_type::int16, p + "value_int16", u,
              e.name + ": lab value, scaled int16; writing it (function 6 or 16) enters a sample", scale,
              access::lab_write);
        b.add(base + lab_offset::sample_minutes_ago, word_type::uint16, p + "sample_minutes_ago", "min",
              e.name + ": how long ago the next entered sample was taken (write before the value; 0 = now)", 1.0,
              access::lab_write);
        b.add(base + lab_offset::status, word_type::uint16, p + "status", "",
              e.name + ": last entry: 0 none, 1 accepted, 2 out of range, 3 not allowed from this address, "
                       "4 not a number, 5 could not be stored");
        b.add(base + lab_offset::entries, word_type::uint16, p + "entries", "", e.name + ": counts accepted entries (wraps)");
        b.add(base + lab_offset::age_min, word_type::uint16, p + "age", "min",
              e.name + ": minutes since the current sample was taken (65535 = none)");
        b.add(base + lab_offset::quantity, word_type::uint16, p + "quantity", "",
              e.name + ": quantity code (" + std::to_string(static_cast<int>(e.kind)) + " = " +
                  std::string{units::quantity_name(e.kind)} + ")");
    }

    std::sort(map.fields.begin(), map.fields.end(),
              [](const field& x, const field& y) { return x.address < y.address; });
    return map;
}

namespace {

std::string type_text(word_type t) {
    switch (t) {
    case word_type::int16: return "int16";
    case word_type::uint16: return "uint16";
    case word_type::uint32: return "uint32 (2 regs, high word first)";
    case word_type::float32: return "float32 (2 regs)";
    }
    return "?";
}

std::string address_text(const field& f) {
    return f.width() == 1 ? std::to_string(f.address)
                          : std::to_string(f.address) + "-" + std::to_string(f.address + 1);
}

std::string csv_quote(const std::string& s) {
    std::string out = "\"";
    for (const char c : s) {
        out += c == '"' ? std::string{"\"\""} : std::string(1, c);
    }
    return out + "\"";
}

} // namespace

std::string to_markdown(const register_map& map, const config::plant_config& cfg) {
    std::string out;
    out += "# floc advisory registers: " + cfg.site.name + "\n\n";
    out += "> CAUTION: floc is advisory only. A licensed operator decides every set point; local permits, "
           "codes and plant procedures prevail over any advice. floc never writes to the PLC.\n\n";
    out += "Served by flocd on " + cfg.hmi.bind + ":" + std::to_string(cfg.hmi.port) +
           " (Modbus/TCP). Every register can be read with function 03 (holding registers) and with "
           "function 04 (input registers): the two tables hold the same values. Addresses are 0-based "
           "PDU addresses (for `mbpoll` add 1, or pass `-0`). float32 values use word order `" +
           std::string{config::to_string(cfg.hmi.float_order)} +
           "`; uint32 values put the high word first. Scaled int16 registers hold round(value x scale), "
           "-32768 when there is no value. Units follow the display units of the config (" +
           std::string{cfg.display.system == units::unit_system::si ? "SI" : "US customary"} + ").\n\n";
    out += "A read must lie inside one block; a read that touches an address outside the blocks is "
           "refused with exception 02 (illegal data address). Functions 01 and 02 (bits) are not served "
           "(exception 01). Only the lab block is writable (functions 06 and 16), and only from the "
           "addresses in `hmi_server.lab_writers`; a write anywhere else is refused with exception 02, a "
           "write from another address with exception 01 (illegal function). A lab value outside its "
           "range is answered normally and not taken: the slot's status register says why.\n\n";
    out += "To enter a lab sample: optionally write how many minutes ago it was taken to "
           "`sample_minutes_ago`, then write the value, either as the float32 pair (function 16, both "
           "registers) or as the scaled int16 (function 06); read `status` back: 1 accepted, 2 out of "
           "range, 3 not allowed from this address, 4 not a number, 5 could not be stored.\n\n";
    bool any_check = false;
    for (const config::lab_entry& e : cfg.lab) {
        any_check = any_check || e.check.has_value();
    }
    if (any_check) {
        out += "## Probe checks\n\nA lab entry that checks a tag takes a check reading of its probe (a portable "
               "meter or a grab sample analysed in the lab). When the reading differs from what the probe showed "
               "at the sample time by more than the entry's tolerance, the tag's input slot turns bad with reason "
               "9 (check disagrees) until a newer check agrees or the check is older than the entry's max_age; "
               "the advice that uses the tag holds, then falls back.\n\n"
               "| lab entry | checks tag | tolerance |\n|---|---|---|\n";
        for (const config::lab_entry& e : cfg.lab) {
            if (!e.check) {
                continue;
            }
            const units::unit& shown = e.kind == units::quantity::dimensionless
                                           ? units::canonical_unit(e.kind)
                                           : cfg.display.unit_for(e.kind);
            // A difference: scaled, not shifted (degF against degC).
            const double tolerance = units::from_canonical(e.check->tolerance, shown) -
                                     units::from_canonical(0.0, shown);
            char buf[64];
            std::snprintf(buf, sizeof buf, "%.4g %s", tolerance, std::string{shown.symbol}.c_str());
            std::string tol{buf};
            if (e.check->relative_tolerance > 0.0) {
                std::snprintf(buf, sizeof buf, " + %.4g %% of the reading", 100.0 * e.check->relative_tolerance);
                tol += buf;
            }
            out += "| `" + e.name + "` | `" + e.check->tag.name + "` | " + tol + " |\n";
        }
        out += "\n";
    }
    out += "## Blocks\n\n| block | first | last | registers |\n|---|---|---|---|\n";
    for (const auto& blk : map.blocks) {
        const std::string name{blk.name.substr(0, blk.name.size() - 3)};
        out += "| " + name + " | " + std::to_string(blk.first) + " | " +
               (blk.count == 0 ? std::string{"-"} : std::to_string(blk.end() - 1)) + " | " +
               std::to_string(blk.count) + " |\n";
    }
    out += "\n## Registers\n\n| address | type | access | unit | scale | name | meaning |\n|---|---|---|---|---|---|---|\n";
    for (const field& f : map.fields) {
        out += "| " + address_text(f) + " | " + type_text(f.type) + " | " +
               (f.acc == access::lab_write ? "read/write" : "read") + " | " + f.unit + " | " +
               (f.type == word_type::int16 && f.int16_scale != 1.0 ? scale_text(f.int16_scale) : std::string{}) +
               " | `" + f.name + "` | " + f.meaning + " |\n";
    }
    out += "\n## Advice quality\n\n| code | meaning |\n|---|---|\n"
           "| 0 | good: computed now from good inputs |\n"
           "| 1 | held: inputs bad or stale, the last good advice is held |\n"
           "| 2 | fallback: held too long, the configured safe value |\n"
           "| 3 | unavailable: no advice yet |\n";
    out += "\n## Advice reason codes\n\nEach advice slot carries up to four reason codes, the main one "
           "first (0 = none).\n\n| code | name | meaning |\n|---|---|---|\n";
    for (const advisors::reason_info& r : advisors::all_reasons()) {
        if (r.code == advisors::reason::none) {
            continue;
        }
        out += "| " + std::to_string(static_cast<int>(r.code)) + " | `" + std::string{r.name} + "` | " +
               std::string{r.text} + " |\n";
    }
    out += "\n## Input reason codes\n\nInput quality: 0 good, 1 uncertain (the last good value while "
           "reads fail or a spike is checked), 2 bad.\n\n| code | meaning |\n|---|---|\n";
    for (int r = 0; r <= static_cast<int>(conditioning::last_reason); ++r) {
        out += "| " + std::to_string(r) + " | " + std::string{conditioning::to_string(static_cast<conditioning::reason>(r))} + " |\n";
    }
    return out;
}

std::string to_csv(const register_map& map) {
    std::string out = "address,registers,type,access,unit,scale,name,meaning\n";
    for (const field& f : map.fields) {
        out += std::to_string(f.address) + "," + std::to_string(f.width()) + "," +
               (f.type == word_type::int16    ? "int16"
                : f.type == word_type::uint16 ? "uint16"
                : f.type == word_type::uint32 ? "uint32"
                                              : "float32") +
               "," + (f.acc == access::lab_write ? "read/write" : "read") + "," + f.unit + "," +
               scale_text(f.type == word_type::int16 ? f.int16_scale : 1.0) + "," + f.name + "," +
               csv_quote(f.meaning) + "\n";
    }
    return out;
}

} // namespace floc::registers
