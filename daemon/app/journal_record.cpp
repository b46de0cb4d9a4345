#include "journal_record.hpp"

namespace floc::app {

const units::unit& shown_unit(const config::display_config& display, units::quantity q) {
    if (q == units::quantity::dimensionless || q == units::quantity::state) {
        return units::canonical_unit(q);
    }
    return display.unit_for(q);
}

store::json_object advice_record(const advisor_outcome& o, const config::plant_config& cfg) {
    const advisors::advice& a = o.advice;
    store::json_object r;
    r.add("event", "advice");
    r.add("advisor", o.key);
    r.add("value", a.value);
    r.add("unit", units::canonical_unit(a.kind).symbol);
    const units::unit& shown = shown_unit(cfg.display, a.kind);
    r.add("display_value", units::from_canonical(a.value, shown));
    r.add("display_unit", shown.symbol);
    r.add("min", a.min);
    r.add("max", a.max);
    r.add("quality", advisors::to_string(a.quality));
    std::vector<store::json_object> reasons;
    for (const advisors::reason code : a.reasons.codes()) {
        store::json_object x;
        x.add("code", static_cast<int>(code));
        x.add("name", advisors::describe(code).name);
        reasons.push_back(std::move(x));
    }
    r.add("reasons", reasons);
    r.add("explanation", a.explanation);
    store::json_object inputs;
    for (const auto& [name, reading] : o.inputs) {
        store::json_object x;
        x.add("value", reading.value);
        x.add("quality", advisors::to_string(reading.quality));
        x.add("sampled_at_s", reading.sampled_at_s);
        inputs.add(name, x);
    }
    r.add("inputs", inputs);
    store::json_object figures;
    for (const advisors::figure& f : a.figures) {
        figures.add(f.name, f.value);
    }
    r.add("figures", figures);
    return r;
}

store::json_object probe_check_record(const probe_check_event& e, const config::plant_config& cfg) {
    const conditioning::check_verdict& v = e.verdict;
    const config::lab_entry& entry = cfg.lab.at(e.entry);
    const bool compared = v.outcome == conditioning::check_outcome::agrees ||
                          v.outcome == conditioning::check_outcome::disagrees;
    store::json_object r;
    r.add("event", "probe_check");
    r.add("entry", entry.name);
    r.add("tag", cfg.tags.at(e.tag).name);
    r.add("sample_time_s", v.check.sample_time_s);
    r.add("check", v.check.value);
    if (compared) {
        r.add("probe", v.probe);
        r.add("difference", v.difference);
    } else {
        r.add_null("probe");
        r.add_null("difference");
    }
    r.add("tolerance", v.tolerance);
    r.add("unit", units::canonical_unit(entry.kind).symbol);
    if (compared) {
        r.add("agrees", v.outcome == conditioning::check_outcome::agrees);
    } else {
        r.add_null("agrees");
    }
    r.add("outcome", conditioning::to_string(v.outcome));
    return r;
}

store::json_object journal_line(const store::json_object& record, double wall_unix_s,
                                std::optional<double> plant_time_s, std::string_view site) {
    store::json_object line;
    line.add("time_unix_s", wall_unix_s);
    if (plant_time_s) {
        line.add("plant_time_s", *plant_time_s);
    } else {
        line.add_null("plant_time_s");
    }
    line.add("site", site);
    line.add("record", record);
    return line;
}

} // namespace floc::app
