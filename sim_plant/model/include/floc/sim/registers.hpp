// The simulated PLC's register map and its pure encoding: plant state, sensor readings and PLC
// set points -> register values, and holding-register writes -> set points. The Modbus/TCP
// server answers reads from a register_image and hands writes to apply_write.
#pragma once

#include "floc/sim/plant.hpp"
#include "floc/sim/sensors.hpp"
#include "floc/units.hpp"

#include <array>
#include <cstdint>
#include <optional>
#include <span>
#include <string>
#include <vector>

namespace floc::sim {

// Modbus data tables, numbered by their read function code.
enum class register_table : std::uint8_t { coils = 1, discrete_inputs = 2, holding_registers = 3, input_registers = 4 };
inline constexpr std::size_t register_table_count = 4;
inline constexpr std::size_t register_space = 65536;

enum class register_type : std::uint8_t { bit, int16, uint16, int32, uint32, float32 };
// Byte order of a 32-bit value over two registers (a = most significant byte); abcd is the
// Modbus convention (big-endian words, high word first).
enum class register_word_order : std::uint8_t { abcd, badc, cdab, dcba };

enum class register_source : std::uint8_t {
    plant_time,      // seconds since the scenario started (uint32)
    sensor,          // a sensor's reading
    setpoint,        // a PLC set point, writable when the entry says so
    blower_running,  // a train's blowers are running (a bit)
    power_failure,   // the power-failure alarm (a bit)
    spare,           // reads 0; keeps a block contiguous
};

enum class setpoint_kind : std::uint8_t {
    do_setpoint,       // per zone, g/m3
    kla,               // per zone, fixed KLa, 1/d
    ras_flow,          // per train, m3/d
    ras_ratio,         // per train, RAS / influent
    was_flow,          // per train, m3/d
    recycle_flow,      // per train, m3/d
    nitrate_setpoint,  // per train, g/m3
};

struct register_entry {
    std::string label;                  // for messages and the register-map listing
    register_table table = register_table::input_registers;
    std::uint16_t address = 0;
    register_type type = register_type::float32;
    std::optional<std::uint8_t> bit;    // a flag inside a 16-bit register
    register_word_order order = register_word_order::abcd;
    register_source source = register_source::spare;
    std::size_t sensor = 0;             // index into the scenario's sensors
    setpoint_kind setpoint = setpoint_kind::do_setpoint;
    std::size_t train = 0;
    std::size_t zone = 0;
    const units::unit* unit = nullptr;  // engineering unit on the register (canonical when null)
    double scale = 1.0;                 // engineering value = raw * scale
    bool writable = false;
    double write_min = 0.0;             // canonical
    double write_max = 0.0;

    [[nodiscard]] std::uint16_t width() const {
        return type == register_type::int32 || type == register_type::uint32 || type == register_type::float32 ? 2U : 1U;
    }
};

struct register_map {
    std::vector<register_entry> entries;
};

// The documented default map, used when a scenario has no [registers] table:
//   input registers 0-1   plant time, uint32 seconds
//   input registers 2...  every sensor in scenario order, float32 (abcd) in its canonical unit
//   discrete input 0      power failure
//   holding register 100  bit i: the blowers of train i are running (read only)
//   holding registers 1000 + 32*t: train t's set points, float32, writable:
//        +0 RAS flow (m3/d), +2 WAS flow (m3/d), +4 internal recycle flow (m3/d),
//        +6 anoxic nitrate set point (g/m3), +8 + 2*z DO set point of zone z (g/m3)
[[nodiscard]] register_map default_register_map(const plant_spec& plant, const std::vector<sensor_spec>& sensors);

// Entries that overlap another entry (other than bit flags sharing one register): pairs of
// indices into map.entries.
[[nodiscard]] std::vector<std::pair<std::size_t, std::size_t>> overlapping_entries(const register_map& map);

// The values the encoder reads.
struct register_inputs {
    double plant_time_s = 0.0;
    const std::vector<sensor>* sensors = nullptr;
    const plant_controls* controls = nullptr;
    const plant_output* outputs = nullptr;
    bool power_failed = false;
};

// Register values of every table. Unmapped addresses are not readable (a server answers them with
// the "illegal data address" exception).
class register_image {
public:
    register_image();

    [[nodiscard]] bool mapped(register_table t, std::uint16_t address) const;
    [[nodiscard]] bool readable(register_table t, std::uint16_t first, std::uint16_t count) const;
    [[nodiscard]] std::uint16_t value(register_table t, std::uint16_t address) const;  // bits: 0 or 1

    void map(register_table t, std::uint16_t address);
    void set(register_table t, std::uint16_t address, std::uint16_t v);

private:
    static std::size_t index(register_table t) { return static_cast<std::size_t>(t) - 1; }
    std::array<std::vector<std::uint16_t>, register_table_count> words_;
    std::array<std::vector<bool>, register_table_count> mapped_;
};

// The value an integer register shows when its reading is missing (NaN): the type's largest value
// (uint16 65535, int16 32767, uint32 4294967295, int32 2147483647), outside any sensible range, so
// that a reader's range check refuses it. A float32 register carries a quiet NaN.
[[nodiscard]] register_image encode(const register_map& map, const register_inputs& in);
void encode_into(const register_map& map, const register_inputs& in, register_image& image);

// Encodes one canonical value for an entry, and decodes it back (for writes and for tests).
[[nodiscard]] std::vector<std::uint16_t> encode_value(const register_entry& e, double canonical);
[[nodiscard]] double decode_value(const register_entry& e, std::span<const std::uint16_t> words);

enum class write_status : std::uint8_t {
    ok,               // written; values outside an entry's limits were clamped to them
    illegal_address,  // no writable entry there, or a write that covers only part of a value
    not_a_number,     // a NaN or infinite value: nothing can be made of it, nothing is written
};

struct write_result {
    write_status status = write_status::ok;
    std::string reason;                // for the server's log
    std::vector<std::string> clamped;  // labels of the entries whose value was clamped
};

// Applies a write of holding registers [first, first + words.size()) to `u`: all or nothing. A
// value outside the entry's `limits` is clamped to them, as a PLC's limit block does; read the
// register back to see the value in force.
[[nodiscard]] write_result apply_write(const register_map& map, std::uint16_t first,
                                       std::span<const std::uint16_t> words, plant_controls& u);

// Stores a set point (canonical units) in `u`: per zone for do_setpoint and kla, per train else.
void store_setpoint(plant_controls& u, setpoint_kind kind, std::size_t train, std::size_t zone, double value);

// The writable entry of a set point (train, and zone for per-zone set points), or null.
[[nodiscard]] const register_entry* find_setpoint(const register_map& map, setpoint_kind kind, std::size_t train,
                                                  std::size_t zone = 0);

// True when a read of `count` registers or bits of table `t` from `first` touches the plant time.
[[nodiscard]] bool touches_plant_time(const register_map& map, register_table t, std::uint16_t first,
                                      std::uint16_t count);

} // namespace floc::sim
