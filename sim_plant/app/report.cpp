#include "report.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <cstdio>
#include <functional>
#include <set>
#include <vector>

namespace floc::app {
namespace {

using sim::asm1::component_count;
using sim::asm1::component_name;
using sim::asm1::component_unit;

std::string number(double v) {
    if (!std::isfinite(v)) {
        return {};
    }
    std::array<char, 32> buf{};
    const int n = std::snprintf(buf.data(), buf.size(), "%.9g", v);
    return std::string{buf.data(), n > 0 ? static_cast<std::size_t>(n) : 0U};
}

std::string json_number(double v) { return std::isfinite(v) ? number(v) : "null"; }

std::string json_string(std::string_view s) {
    std::string out = "\"";
    for (const char c : s) {
        if (c == '"' || c == '\\') {
            out += '\\';
            out += c;
        } else if (static_cast<unsigned char>(c) < 0x20) {
            std::array<char, 8> buf{};
            std::snprintf(buf.data(), buf.size(), "\\u%04x", static_cast<unsigned>(c));
            out += buf.data();
        } else {
            out += c;
        }
    }
    return out + "\"";
}

const units::unit& sensor_unit(const sim::sensor_spec& s) {
    using sim::signal_kind;
    switch (s.signal.kind) {
    case signal_kind::zone_kla: return units::canonical_unit(units::quantity::rate);
    case signal_kind::influent_flow:
    case signal_kind::ras_flow:
    case signal_kind::was_flow:
    case signal_kind::recycle_flow:
    case signal_kind::effluent_flow: return units::canonical_unit(units::quantity::flow);
    case signal_kind::influent_temperature: return units::canonical_unit(units::quantity::temperature);
    case signal_kind::blanket_height: return units::canonical_unit(units::quantity::length);
    case signal_kind::aeration_power: return units::canonical_unit(units::quantity::power);
    default: return units::canonical_unit(units::quantity::concentration);
    }
}

// One column: its name with unit, and how to read it.
struct column {
    std::string name;
    std::function<double(const sim::plant_output&, const sim::simulation&)> value;
};

std::string comp(std::size_t k) {
    return std::string{component_name(k)} + "[" + std::string{component_unit(k)} + "]";
}

std::vector<column> columns(const sim::scenario& s) {
    std::vector<column> cols;
    cols.push_back({"time[s]", [](const auto&, const sim::simulation& m) { return m.time_s(); }});
    cols.push_back({"time[d]", [](const auto&, const sim::simulation& m) { return m.time_s() / 86400.0; }});
    cols.push_back({"influent.flow[m3/d]", [](const sim::plant_output& o, const auto&) { return o.influent.flow_m3_per_d; }});
    cols.push_back({"influent.temperature[degC]", [](const sim::plant_output& o, const auto&) { return o.influent.temperature_c; }});
    for (std::size_t k = 0; k < component_count; ++k) {
        cols.push_back({"influent." + comp(k), [k](const sim::plant_output& o, const auto&) { return o.influent.c[k]; }});
    }
    for (std::size_t t = 0; t < s.plant.trains.size(); ++t) {
        const sim::train_spec& tr = s.plant.trains[t];
        const std::string p = "train." + tr.name + ".";
        cols.push_back({p + "influent_flow[m3/d]", [t](const sim::plant_output& o, const auto&) { return o.trains[t].influent.flow_m3_per_d; }});
        cols.push_back({p + "ras_flow[m3/d]", [t](const sim::plant_output& o, const auto&) { return o.trains[t].ras_m3_per_d; }});
        cols.push_back({p + "was_flow[m3/d]", [t](const sim::plant_output& o, const auto&) { return o.trains[t].was_m3_per_d; }});
        cols.push_back({p + "recycle_flow[m3/d]", [t](const sim::plant_output& o, const auto&) { return o.trains[t].recycle_m3_per_d; }});
        cols.push_back({p + "effluent_flow[m3/d]", [t](const sim::plant_output& o, const auto&) { return o.trains[t].effluent_m3_per_d; }});
        for (std::size_t z = 0; z < tr.zones.size(); ++z) {
            const std::string zp = "zone." + tr.zones[z].name + ".";
            for (std::size_t k = 0; k < component_count; ++k) {
                cols.push_back({zp + comp(k), [t, z, k](const sim::plant_output& o, const auto&) { return o.trains[t].zones[z].c[k]; }});
            }
            cols.push_back({zp + "TSS[g/m3]", [t, z](const sim::plant_output& o, const auto&) { return o.trains[t].zones[z].tss_g_per_m3; }});
            cols.push_back({zp + "KLa[1/d]", [t, z](const sim::plant_output& o, const auto&) { return o.trains[t].zones[z].kla_per_d; }});
        }
        const std::string cp = "clarifier." + tr.clarifier.name + ".";
        for (std::size_t j = 0; j < sim::settler_layers; ++j) {
            std::array<char, 16> lbuf{};
            std::snprintf(lbuf.data(), lbuf.size(), "layer%02zu.", j + 1);
            const std::string lp = cp + lbuf.data();
            for (std::size_t k = 0; k < component_count; ++k) {
                cols.push_back({lp + comp(k), [t, j, k](const sim::plant_output& o, const auto&) { return o.trains[t].clarifier.layers[j][k]; }});
            }
            cols.push_back({lp + "TSS[g/m3]", [t, j](const sim::plant_output& o, const auto&) { return o.trains[t].clarifier.tss_g_per_m3[j]; }});
        }
        cols.push_back({cp + "blanket[m]", [t](const sim::plant_output& o, const auto&) { return o.trains[t].clarifier.blanket_m; }});
    }
    for (std::size_t k = 0; k < component_count; ++k) {
        cols.push_back({"effluent." + comp(k), [k](const sim::plant_output& o, const auto&) { return o.effluent[k]; }});
    }
    const sim::asm1::stoichiometry st = s.plant.biology.stoich;
    cols.push_back({"effluent.flow[m3/d]", [](const sim::plant_output& o, const auto&) { return o.effluent_m3_per_d; }});
    cols.push_back({"effluent.TSS[g/m3]", [](const sim::plant_output& o, const auto&) { return o.effluent_tss_g_per_m3; }});
    cols.push_back({"effluent.COD[g/m3]", [](const sim::plant_output& o, const auto&) { return sim::asm1::total_cod(o.effluent); }});
    cols.push_back({"effluent.TN[g/m3]", [st](const sim::plant_output& o, const auto&) { return sim::asm1::total_nitrogen(st, o.effluent); }});
    cols.push_back({"effluent.BOD5[g/m3]", [st](const sim::plant_output& o, const auto&) { return sim::asm1::bod5(st, o.effluent); }});
    cols.push_back({"energy.aeration[kW]", [](const sim::plant_output& o, const auto&) { return o.energy.aeration_kw; }});
    cols.push_back({"energy.pumping[kW]", [](const sim::plant_output& o, const auto&) { return o.energy.pumping_kw; }});
    cols.push_back({"energy.mixing[kW]", [](const sim::plant_output& o, const auto&) { return o.energy.mixing_kw; }});
    cols.push_back({"energy.aeration_total[kWh]", [](const sim::plant_output& o, const auto&) { return o.energy.aeration_kwh; }});
    cols.push_back({"energy.pumping_total[kWh]", [](const sim::plant_output& o, const auto&) { return o.energy.pumping_kwh; }});
    cols.push_back({"energy.mixing_total[kWh]", [](const sim::plant_output& o, const auto&) { return o.energy.mixing_kwh; }});
    for (std::size_t i = 0; i < s.sensors.size(); ++i) {
        cols.push_back({"sensor." + s.sensors[i].name + "[" + std::string{sensor_unit(s.sensors[i]).symbol} + "]",
                        [i](const auto&, const sim::simulation& m) { return m.sensors()[i].reading(); }});
    }
    return cols;
}

} // namespace

void write_csv_header(std::ostream& out, const sim::scenario& s) {
    bool first = true;
    for (const column& c : columns(s)) {
        out << (first ? "" : ",") << c.name;
        first = false;
    }
    out << "\n";
}

void write_csv_row(std::ostream& out, const sim::scenario& s, const sim::simulation& m) {
    const sim::plant_output o = m.outputs();
    bool first = true;
    for (const column& c : columns(s)) {
        out << (first ? "" : ",") << number(c.value(o, m));
        first = false;
    }
    out << "\n";
}

void write_json(std::ostream& out, const sim::scenario& s, const sim::simulation& m) {
    const sim::plant_output o = m.outputs();
    const auto components = [&](const sim::asm1::vector& c) {
        std::string j = "{";
        for (std::size_t k = 0; k < component_count; ++k) {
            j += (k > 0 ? ", " : "") + json_string(component_name(k)) + ": " + json_number(c[k]);
        }
        return j + "}";
    };
    out << "{\n  \"scenario\": " << json_string(s.name) << ",\n";
    out << "  \"plant_time_s\": " << json_number(m.time_s()) << ",\n";
    out << "  \"units\": {\"concentration\": \"g/m3\", \"S_ALK\": \"mol/m3\", \"flow\": \"m3/d\", \"KLa\": \"1/d\", "
           "\"length\": \"m\", \"power\": \"kW\", \"energy\": \"kWh\"},\n";
    out << "  \"influent\": {\"flow\": " << json_number(o.influent.flow_m3_per_d)
        << ", \"temperature_degC\": " << json_number(o.influent.temperature_c)
        << ", \"concentrations\": " << components(o.influent.c) << "},\n";
    out << "  \"trains\": [\n";
    for (std::size_t t = 0; t < o.trains.size(); ++t) {
        const sim::train_spec& tr = s.plant.trains[t];
        const sim::train_output& to = o.trains[t];
        out << "    {\"name\": " << json_string(tr.name) << ", \"influent_flow\": " << json_number(to.influent.flow_m3_per_d)
            << ", \"ras_flow\": " << json_number(to.ras_m3_per_d) << ", \"was_flow\": " << json_number(to.was_m3_per_d)
            << ", \"recycle_flow\": " << json_number(to.recycle_m3_per_d)
            << ", \"effluent_flow\": " << json_number(to.effluent_m3_per_d)
            << ", \"blowers_running\": " << (to.blowers_running ? "true" : "false") << ",\n      \"zones\": [\n";
        for (std::size_t z = 0; z < to.zones.size(); ++z) {
            const sim::zone_output& zo = to.zones[z];
            out << "        {\"name\": " << json_string(tr.zones[z].name) << ", \"TSS\": " << json_number(zo.tss_g_per_m3)
                << ", \"KLa\": " << json_number(zo.kla_per_d) << ", \"DO_saturation\": " << json_number(zo.do_saturation_g_per_m3)
                << ", \"concentrations\": " << components(zo.c) << "}" << (z + 1 < to.zones.size() ? "," : "") << "\n";
        }
        out << "      ],\n      \"clarifier\": {\"name\": " << json_string(tr.clarifier.name)
            << ", \"blanket_m\": " << json_number(to.clarifier.blanket_m)
            << ", \"solids_kg\": " << json_number(to.clarifier.solids_kg) << ", \"layers\": [\n";
        for (std::size_t j = 0; j < sim::settler_layers; ++j) {
            out << "        {\"layer\": " << j + 1 << ", \"TSS\": " << json_number(to.clarifier.tss_g_per_m3[j])
                << ", \"concentrations\": " << components(to.clarifier.layers[j]) << "}"
                << (j + 1 < sim::settler_layers ? "," : "") << "\n";
        }
        out << "      ]}}" << (t + 1 < o.trains.size() ? "," : "") << "\n";
    }
    const sim::asm1::stoichiometry& st = s.plant.biology.stoich;
    out << "  ],\n  \"effluent\": {\"flow\": " << json_number(o.effluent_m3_per_d) << ", \"TSS\": " << json_number(o.effluent_tss_g_per_m3)
        << ", \"COD\": " << json_number(sim::asm1::total_cod(o.effluent))
        << ", \"TN\": " << json_number(sim::asm1::total_nitrogen(st, o.effluent))
        << ", \"BOD5\": " << json_number(sim::asm1::bod5(st, o.effluent))
        << ", \"concentrations\": " << components(o.effluent) << "},\n";
    out << "  \"energy\": {\"aeration_kW\": " << json_number(o.energy.aeration_kw) << ", \"pumping_kW\": " << json_number(o.energy.pumping_kw)
        << ", \"mixing_kW\": " << json_number(o.energy.mixing_kw) << ", \"aeration_kWh\": " << json_number(o.energy.aeration_kwh)
        << ", \"pumping_kWh\": " << json_number(o.energy.pumping_kwh) << ", \"mixing_kWh\": " << json_number(o.energy.mixing_kwh)
        << "},\n";
    out << "  \"sensors\": {";
    for (std::size_t i = 0; i < m.sensors().size(); ++i) {
        const sim::sensor& sn = m.sensors()[i];
        out << (i > 0 ? ", " : "") << "\n    " << json_string(sn.spec().name) << ": {\"reading\": " << json_number(sn.reading())
            << ", \"unit\": " << json_string(sensor_unit(sn.spec()).symbol) << ", \"updated_s\": " << json_number(sn.last_update_s()) << "}";
    }
    out << "\n  }\n}\n";
}

std::string status_line(const sim::scenario& s, const sim::simulation& m, double until_s) {
    const sim::plant_output o = m.outputs();
    std::array<char, 256> buf{};
    const double day = m.time_s() / 86400.0;
    std::snprintf(buf.data(), buf.size(), "%s  day %.2f/%.2f  Q %.0f m3/d  T %.1f degC  eff NH4 %.2f NO3 %.2f TSS %.1f mg/L  air %.0f kW",
                  s.name.c_str(), day, until_s / 86400.0, o.influent.flow_m3_per_d, o.influent.temperature_c,
                  o.effluent[sim::asm1::s_nh], o.effluent[sim::asm1::s_no], o.effluent_tss_g_per_m3, o.energy.aeration_kw);
    return buf.data();
}

std::string active_faults(const sim::scenario& s, const sim::simulation& m) {
    std::string out;
    const auto add = [&](std::string_view what) {
        out += (out.empty() ? "" : ", ") + std::string{what};
    };
    for (const auto& [sensor, fault] : sim::sensor_faults_at(s.sensors, m.time_s())) {
        add(s.sensors[sensor].name + " " + std::string{sim::to_string(s.sensors[sensor].faults[fault].kind)});
    }
    for (const sim::plant_event& e : m.events()) {
        if (m.time_s() >= e.start_s && m.time_s() < e.end_s) {
            add(sim::to_string(e.kind));
        }
    }
    return out.empty() ? "none" : out;
}

std::string serving_status_line(const sim::scenario& s, const sim::simulation& m) {
    const sim::plant_output o = m.outputs();
    const double t = m.time_s();
    const auto whole = static_cast<unsigned long long>(std::max(t, 0.0));
    std::array<char, 256> buf{};
    std::snprintf(buf.data(), buf.size(), "%s  day %llu %02llu:%02llu  Q %.0f m3/d  eff NH4 %.2f NO3 %.2f TSS %.1f mg/L  blanket",
                  s.name.c_str(), whole / 86400, whole % 86400 / 3600, whole % 3600 / 60, o.influent.flow_m3_per_d,
                  o.effluent[sim::asm1::s_nh], o.effluent[sim::asm1::s_no], o.effluent_tss_g_per_m3);
    std::string line = buf.data();
    for (std::size_t i = 0; i < o.trains.size(); ++i) {
        std::snprintf(buf.data(), buf.size(), " %s %.2f", s.plant.trains[i].name.c_str(), o.trains[i].clarifier.blanket_m);
        line += buf.data();
    }
    return line + " m  faults: " + active_faults(s, m);
}

void write_register_map(std::ostream& out, const sim::scenario& s) {
    out << "# Register map of the simulated PLC of " << s.name << (s.default_registers ? " (flocsim's default map)" : "") << "\n"
        << "# CAUTION: a simulator. Never point flocsim at a real plant network. floc is advisory: a\n"
        << "# licensed operator decides every set point; local permits, codes and plant procedures prevail.\n"
        << "# table              address  type     bit  access  unit      scale  value\n";
    for (const sim::register_entry& e : s.registers.entries) {
        static constexpr std::array<const char*, 5> tables{"", "coils", "discrete inputs", "holding registers", "input registers"};
        static constexpr std::array<const char*, 6> types{"bit", "int16", "uint16", "int32", "uint32", "float32"};
        std::array<char, 256> buf{};
        std::snprintf(buf.data(), buf.size(), "%-20s %7u  %-7s  %3s  %-6s  %-8s  %5g  %s\n",
                      tables.at(static_cast<std::size_t>(e.table)), static_cast<unsigned>(e.address),
                      types.at(static_cast<std::size_t>(e.type)), e.bit ? std::to_string(*e.bit).c_str() : "-",
                      e.writable ? "rw" : "r", e.unit != nullptr ? std::string{e.unit->symbol}.c_str() : "-", e.scale,
                      e.label.c_str());
        out << buf.data();
    }
}

namespace {

// "8 entries, sampled daily at 08:00, typed in 2 h later, also at the start" or "none".
std::string lab_sheet_text(const sim::lab_sheet_spec& sheet) {
    if (sheet.entries.empty()) {
        return "none";
    }
    std::set<double> times;
    std::set<double> delays;
    for (const sim::lab_sheet_entry& e : sheet.entries) {
        times.insert(e.sample_times_s.begin(), e.sample_times_s.end());
        delays.insert(e.entry_delay_s);
    }
    std::string at;
    for (const double t : times) {
        std::array<char, 32> buf{};
        const auto minute = static_cast<int>(t / 60.0);
        std::snprintf(buf.data(), buf.size(), "%02d:%02d", minute / 60, minute % 60);
        at += (at.empty() ? "" : ", ") + std::string{buf.data()};
    }
    const auto hours = [](double s) { return number(s / 3600.0) + " h"; };
    std::string delay = hours(*delays.begin());
    if (delays.size() > 1) {
        delay += " to " + hours(*delays.rbegin());
    }
    return std::to_string(sheet.entries.size()) +
           (sheet.entries.size() == 1 ? " entry" : " entries") + ", sampled daily at " + at +
           ", typed in " + delay + " later" + (sheet.at_start ? ", also at the start" : "");
}

} // namespace

void write_summary(std::ostream& out, const sim::scenario& s) {
    std::size_t zones = 0;
    double volume = 0.0;
    for (const sim::train_spec& t : s.plant.trains) {
        zones += t.zones.size();
        for (const sim::zone_spec& z : t.zones) {
            volume += z.volume_m3;
        }
    }
    std::size_t faults = 0;
    for (const sim::sensor_spec& sn : s.sensors) {
        faults += sn.faults.size();
    }
    out << "scenario OK: " << s.source_file << "\n"
        << "  name        " << s.name << "\n"
        << (s.based_on.empty() ? std::string{} : "  based on    " + s.based_on + "\n")
        << "  plant       " << s.plant.trains.size() << (s.plant.trains.size() == 1 ? " train, " : " trains, ") << zones
        << " zones (" << number(volume) << " m3), " << s.plant.trains.size() << " clarifiers\n"
        << "  influent    " << (s.influent.kind == sim::influent_kind::generated ? "generated" : "constant") << ", mean "
        << number(s.influent.mean_flow_m3_per_d) << " m3/d, seed " << s.seed << "\n"
        << "  sensors     " << s.sensors.size() << " (" << faults << " scheduled faults), " << s.events.size() << " events\n"
        << "  server      port " << s.server.port << ", " << s.server.max_connections << " connections at most\n"
        << "  registers   " << s.registers.entries.size() << " entries" << (s.default_registers ? " (default map)" : "") << "\n"
        << "  lab sheet   " << lab_sheet_text(s.lab_sheet) << "\n"
        << "  solver      " << (s.solver.stepper == sim::stepper_kind::dopri5 ? "dopri5" : "rosenbrock4") << ", rtol "
        << number(s.solver.relative_tolerance) << "\n";
}

} // namespace floc::app
