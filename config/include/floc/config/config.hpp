// The validated configuration of one floc installation, as plain structs.
//
// Every physical value is held in the canonical unit of its quantity (see floc/units.hpp) and the
// member name carries that unit. Names of things (tags, lab entries, zones, ...) are validated:
// every reference points at something defined, with the right quantity. Items keep the file
// position they came from so that later checks and log lines can point back at the file.
#pragma once

#include "floc/advisors/aeration.hpp"
#include "floc/advisors/ras.hpp"
#include "floc/advisors/recycle.hpp"
#include "floc/advisors/waste.hpp"
#include "floc/units.hpp"

#include <array>
#include <cstdint>
#include <optional>
#include <string>
#include <vector>

namespace floc::config {

// The schema version this build reads (key `config_version`).
inline constexpr std::int64_t schema_version = 1;

// Where in a config file something was written (1-based; 0 = not from a file).
struct source_pos {
    std::uint32_t line = 0;
    std::uint32_t column = 0;
};

// --- Units for display and registers ---------------------------------------------------------
struct display_config {
    units::unit_system system = units::unit_system::si;
    // The unit used on screens and registers for each quantity (defaults follow `system`,
    // config may override single quantities).
    std::array<const units::unit*, units::quantity_count> unit_of{};

    [[nodiscard]] const units::unit& unit_for(units::quantity q) const {
        return *unit_of.at(static_cast<std::size_t>(q));
    }
};

// --- PLC connections and tags -----------------------------------------------------------------
struct plc_connection {
    std::string name;
    std::string host;            // IPv4 address or host name
    std::uint16_t port = 502;
    std::uint8_t unit_id = 1;
    double connect_timeout_s = 3.0;
    double response_timeout_s = 1.0;
    double byte_timeout_s = 0.5;
    double poll_period_s = 5.0;  // default period of this connection's tags
    double reconnect_min_s = 1.0;  // first back-off after a failure
    double reconnect_max_s = 60.0; // back-off ceiling
    std::uint16_t max_registers_per_read = 125;  // lower it for PLCs that need shorter reads
    std::uint16_t max_gap_registers = 8;         // unused registers one read may span
    source_pos at;
};

// Modbus read function codes a tag may use. floc never writes to a PLC.
enum class read_function : std::uint8_t {
    coils = 1,
    discrete_inputs = 2,
    holding_registers = 3,
    input_registers = 4,
};

enum class data_type : std::uint8_t { bit, int16, uint16, int32, uint32, float32 };

// Byte order of a 32-bit value across two registers; letters name the bytes of the value from
// most to least significant as they appear on the wire. `abcd` is the Modbus convention
// (big-endian words, high word first).
enum class word_order : std::uint8_t { abcd, badc, cdab, dcba };

enum class filter_kind : std::uint8_t { none, median, ema };

struct tag {
    std::string name;
    std::string description;
    std::size_t plc = 0;                 // index into plant_config::plcs
    read_function function = read_function::input_registers;
    std::uint16_t address = 0;           // PDU address, 0-based
    data_type type = data_type::float32;
    word_order order = word_order::abcd;
    std::optional<std::uint8_t> bit;     // 0..15: a flag inside a 16-bit register
    double scale = 1.0;                  // engineering value = raw * scale + offset
    double offset = 0.0;
    const units::unit* unit = nullptr;   // engineering unit after scale/offset
    std::optional<double> poll_period_s; // overrides the connection's period
    // Conditioning (canonical units of the tag's quantity).
    double valid_min = 0.0;
    double valid_max = 0.0;
    double stale_after_s = 30.0;
    std::optional<double> frozen_after_s;   // unchanged for this long = stuck probe
    double frozen_tolerance = 0.0;
    std::optional<double> max_change_per_minute;  // spike rejection
    filter_kind filter = filter_kind::none;
    std::uint32_t median_samples = 5;
    double ema_time_constant_s = 60.0;
    source_pos at;          // the tag's name
    source_pos address_at;  // its address

    [[nodiscard]] units::quantity quantity() const { return unit->kind; }
    // Registers (or bits) the tag occupies.
    [[nodiscard]] std::uint16_t width() const {
        return type == data_type::int32 || type == data_type::uint32 || type == data_type::float32
                   ? 2U
                   : 1U;
    }
};

// A reference to a tag or lab entry by name, resolved and checked at load.
struct signal_ref {
    std::string name;
    bool is_lab = false;    // false: a tag; true: a lab entry
    std::size_t index = 0;  // into plant_config::tags or ::lab
    source_pos at;

    [[nodiscard]] bool empty() const { return name.empty(); }
};

// What a lab entry checks, when it is a check reading of an online probe (a portable meter or a
// grab sample analysed in the lab): the tag it is compared with and how far the two may differ.
// The comparison allows tolerance + relative_tolerance x |check reading|.
struct probe_check {
    signal_ref tag;                   // a [[tag]] of the entry's quantity
    double tolerance = 0.0;           // canonical unit of the quantity, a difference; > 0
    double relative_tolerance = 0.0;  // a fraction of the check reading (0..1)
};

// A value the operator enters from the lab sheet through the HMI.
struct lab_entry {
    std::string name;
    std::string description;
    units::quantity kind = units::quantity::concentration;
    double valid_min = 0.0;  // canonical unit of `kind`
    double valid_max = 0.0;
    double max_age_s = 36.0 * 3600.0;  // older samples are not used
    std::optional<probe_check> check;  // `checks`: the entry is a check reading of this tag
    source_pos at;
};

// --- The plant --------------------------------------------------------------------------------
enum class zone_kind : std::uint8_t { anoxic, aerobic, anaerobic };

struct zone {
    std::string name;
    std::string train;
    zone_kind kind = zone_kind::aerobic;
    double volume_m3 = 0.0;
    source_pos at;
};

struct clarifier {
    std::string name;
    std::string train;
    double area_m2 = 0.0;
    double side_water_depth_m = 0.0;
    source_pos at;
};

struct site_config {
    std::string name;
    std::string description;
};

// --- Advisors ---------------------------------------------------------------------------------

// What every advisor has: its schedule, how long it holds its last good advice on bad input and
// the safe value it falls back to after that. The loader copies `hold_for_s` into the advisor's
// parameters (`params.hold_for_s`), which is what the advisor uses.
struct advisor_common {
    double period_s = 300.0;
    double hold_for_s = 1800.0;
    source_pos at;
};

// Each advisor below is what the config says about one advisor: its schedule, what it advises
// (zone or train), the signals feeding it, and `params`, the advisor's own parameters from
// floc/advisors/ with the plant geometry it needs already filled in.

struct aeration_advisor {
    advisor_common common;
    std::string zone;           // an aerobic zone
    signal_ref dissolved_oxygen;
    signal_ref ammonia;         // optional
    signal_ref nitrate;         // optional
    signal_ref flow;
    signal_ref temperature;     // optional
    signal_ref setpoint;        // optional: the DO set point the PLC runs now
    advisors::aeration_params params;
};

struct recycle_advisor {
    advisor_common common;
    std::string train;
    signal_ref nitrate;       // anoxic-zone nitrate
    signal_ref flow;          // influent flow of the train
    signal_ref recycle_flow;  // optional: the recycle flow now
    advisors::recycle_params params;
};

struct ras_advisor {
    advisor_common common;
    std::string train;
    std::vector<std::string> clarifiers;
    signal_ref flow;          // influent flow to the clarifiers
    signal_ref ras_flow;      // optional measured RAS flow
    signal_ref mlss;          // tag or lab
    signal_ref ras_solids;    // optional, tag or lab
    signal_ref sv30;          // optional, tag or lab
    signal_ref svi;           // optional, tag or lab (else from sv30 and mlss)
    signal_ref blanket;       // optional sludge-blanket height above the floor
    advisors::ras_params params;  // clarifier_area_m2: the sum of `clarifiers`
};

struct waste_advisor {
    advisor_common common;
    std::string train;
    signal_ref mlss;
    signal_ref was_solids;
    signal_ref effluent_tss;     // optional
    signal_ref flow;             // influent flow (effluent = influent - waste)
    signal_ref was_flow;         // optional metered waste flow, for the actual SRT
    signal_ref temperature;      // optional; needed for the minimum aerobic SRT
    signal_ref influent_bod;     // optional influent BOD or COD concentration, for F/M
    advisors::waste_params params;  // volumes: the train's zones and clarifiers
};

// --- The advisory Modbus/TCP server -----------------------------------------------------------
struct ipv4_network {
    std::uint32_t address = 0;  // host order
    std::uint8_t prefix = 32;
    [[nodiscard]] bool contains(std::uint32_t host_order_address) const {
        const std::uint32_t mask = prefix == 0 ? 0U : ~std::uint32_t{0} << (32U - prefix);
        return (host_order_address & mask) == (address & mask);
    }
};

// Base addresses of the register blocks (0-based PDU addresses, mirrored in the holding and the
// input register tables). Sizes follow from the rest of the config; see register_layout.hpp.
struct register_layout_config {
    std::uint16_t status_at = 0;
    std::uint16_t advice_at = 100;
    std::uint16_t inputs_at = 1000;
    std::uint16_t lab_at = 3000;
    source_pos at;
    std::array<source_pos, 4> base_at{};  // where each of the four bases was written
};

struct hmi_server_config {
    std::string bind = "127.0.0.1";
    std::uint16_t port = 1502;
    std::vector<ipv4_network> allow{{0x7F000000U, 8}};  // who may connect
    std::vector<ipv4_network> lab_writers{{0x7F000000U, 8}};  // who may write lab entries
    std::uint32_t max_connections = 8;
    double idle_timeout_s = 300.0;
    word_order float_order = word_order::abcd;
    register_layout_config layout;
    source_pos at;
};

// --- Storage and clock ------------------------------------------------------------------------
enum class log_sink : std::uint8_t { console, file, journald };

struct storage_config {
    std::string state_dir = "/var/lib/floc";       // state and lab entries
    std::string journal = "/var/lib/floc/advice-journal.jsonl";
    log_sink log = log_sink::console;
    std::string log_file = "/var/log/floc/flocd.log";
    std::string log_level = "info";
};

enum class clock_source : std::uint8_t { system, plc_tag };

struct clock_config {
    clock_source source = clock_source::system;
    signal_ref tag;  // with plc_tag: a duration tag holding plant seconds
};

// --- The whole file ---------------------------------------------------------------------------
struct plant_config {
    std::string source_file;
    site_config site;
    display_config display;
    std::vector<plc_connection> plcs;
    std::vector<tag> tags;
    std::vector<lab_entry> lab;
    std::vector<zone> zones;
    std::vector<clarifier> clarifiers;
    std::vector<aeration_advisor> aeration;
    std::vector<recycle_advisor> recycle;
    std::vector<ras_advisor> ras;
    std::vector<waste_advisor> waste;
    hmi_server_config hmi;
    storage_config storage;
    clock_config clock;

    [[nodiscard]] const tag* find_tag(std::string_view name) const;
    [[nodiscard]] const lab_entry* find_lab(std::string_view name) const;
    [[nodiscard]] const zone* find_zone(std::string_view name) const;
    [[nodiscard]] std::size_t advisor_count() const {
        return aeration.size() + recycle.size() + ras.size() + waste.size();
    }
};

[[nodiscard]] std::string_view to_string(read_function f);
[[nodiscard]] std::string_view to_string(data_type t);
[[nodiscard]] std::string_view to_string(word_order o);
[[nodiscard]] std::string_view to_string(zone_kind k);
[[nodiscard]] std::string format_network(const ipv4_network& n);

} // namespace floc::config
