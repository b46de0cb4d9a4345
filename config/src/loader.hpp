// Internal: the state shared by the section readers while one file is loaded.
#pragma once

#include "floc/config/table_reader.hpp"

#include <map>
#include <set>
#include <string>

namespace floc::config::detail {

// What a signal reference may point at.
enum class signal_source : std::uint8_t { tag_only, lab_only, tag_or_lab };

struct loader {
    explicit loader(diagnostics& d) : diags(d) {}

    diagnostics& diags;
    plant_config cfg;
    std::map<std::string, source_pos, std::less<>> signal_names;  // tags and lab entries
    std::map<std::string, source_pos, std::less<>> zone_names;
    std::map<std::string, source_pos, std::less<>> clarifier_names;
    std::map<std::string, source_pos, std::less<>> plc_names;
    // Tags and lab entries whose own definition had an error: references to them are left
    // unresolved without a second message.
    std::set<std::string, std::less<>> broken_signals;
    // Tags checked by a lab entry (`checks`): the entry's name and where it named the tag.
    std::map<std::string, std::pair<std::string, source_pos>, std::less<>> checked_tags;
    bool plc_key_present = false;

    // Records `name` in `registry`; reports a duplicate (with where it was first used).
    bool claim(std::map<std::string, source_pos, std::less<>>& registry, const std::string& name,
               source_pos at, const std::string& path, std::string_view what);

    // Reads `key` as the name of a tag and/or lab entry measuring `kind`.
    signal_ref signal(table_reader& t, std::string_view key, need n, signal_source source,
                      units::quantity kind);

    // Reads `key` as the name of a train (a train is named by its zones).
    std::optional<std::string> train(table_reader& t, std::string_view key, need n);

    // Advisor schedule (`period`, unless the advisor has a fixed schedule) and hold time.
    advisor_common common(table_reader& t, bool has_period = true);
};

// Section readers, in the order they run (each may use what the earlier ones read).
void read_site_and_display(loader& l, table_reader& root);
void read_plcs_and_tags(loader& l, table_reader& root);
void read_lab(loader& l, table_reader& root);
void read_plant(loader& l, table_reader& root);
void read_advisors(loader& l, table_reader& root);
void read_services(loader& l, table_reader& root);
// Checks across sections: register overlaps, the register layout.
void check_registers(loader& l);

} // namespace floc::config::detail
