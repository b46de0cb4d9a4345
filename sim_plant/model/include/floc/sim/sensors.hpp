// Instruments: each measurement passes through a sensor model (first-order lag, noise, sample
// interval, range clamp) and a fault schedule (stuck value, drift, spike, dropout, offset after a
// calibration). The schedule also holds events that are not a sensor's: PLC link loss, slow
// replies, dropped connections, exception replies and wrong transaction ids (acted on by the
// Modbus server), blower trips and power failures (acted on by the plant).
#pragma once

#include "floc/sim/plant.hpp"
#include "floc/sim/random.hpp"

#include <cstddef>
#include <cstdint>
#include <limits>
#include <optional>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

namespace floc::sim {

// What a sensor measures.
enum class signal_kind : std::uint8_t {
    zone_component,     // one ASM1 component in a zone
    zone_tss,           // mixed-liquor suspended solids in a zone
    zone_kla,           // actual KLa of a zone
    influent_flow,      // the train's influent (whole plant when train = no_index)
    influent_temperature,
    influent_component, // one ASM1 component of the influent
    ras_flow,
    was_flow,
    recycle_flow,
    effluent_flow,      // the train's (whole plant when train = no_index)
    effluent_component, // in the train's (or the plant's) effluent
    effluent_tss,
    underflow_tss,      // RAS and waste solids
    blanket_height,
    aeration_power,     // benchmark aeration energy rate, kW (whole plant)
};

struct signal_ref {
    signal_kind kind = signal_kind::zone_component;
    std::size_t train = no_index;
    std::size_t zone = 0;
    std::size_t component = asm1::s_o;
};

// The true value of a signal, canonical units.
[[nodiscard]] double read_signal(const plant_output& out, const signal_ref& s);

enum class fault_kind : std::uint8_t {
    stuck,      // the reading freezes at its value when the fault starts
    drift,      // the reading drifts by `magnitude` per day since the fault started
    spike,      // `magnitude` is added to the reading while the fault lasts
    dropout,    // no reading: NaN, or no update when `hold` is set
    offset,     // a bad calibration: `magnitude` is added from the start on
};

struct sensor_fault {
    fault_kind kind = fault_kind::stuck;
    double start_s = 0.0;
    double end_s = std::numeric_limits<double>::infinity();
    double magnitude = 0.0;  // canonical units (per day for drift)
    bool hold = false;       // dropout: keep the last reading instead of NaN
};

struct sensor_spec {
    std::string name;
    std::string description;
    signal_ref signal;
    double lag_s = 0.0;              // first-order time constant
    double noise_sd = 0.0;           // standard deviation of white noise, canonical units
    double sample_interval_s = 1.0;
    double range_min = -std::numeric_limits<double>::infinity();
    double range_max = std::numeric_limits<double>::infinity();
    std::vector<sensor_fault> faults;
};

// One sensor's running state.
class sensor {
public:
    sensor(const sensor_spec& spec, std::uint64_t seed);

    // Takes a sample of `true_value` at plant time `t_s` (called at the sample instants).
    void sample(double t_s, double true_value);
    // The next sample instant after `t_s`.
    [[nodiscard]] double next_sample_after(double t_s) const;

    [[nodiscard]] const sensor_spec& spec() const { return spec_; }
    [[nodiscard]] double reading() const { return reading_; }        // NaN when dropped out
    [[nodiscard]] double last_update_s() const { return last_update_s_; }
    [[nodiscard]] bool has_reading() const { return has_reading_; }
    [[nodiscard]] std::uint64_t samples() const { return samples_; }

private:
    sensor_spec spec_;
    random_stream rng_;
    double lagged_ = 0.0;
    double last_sample_s_ = 0.0;
    bool started_ = false;
    double reading_ = std::numeric_limits<double>::quiet_NaN();
    double last_update_s_ = 0.0;
    bool has_reading_ = false;
    std::vector<double> stuck_at_;  // per fault: the reading when it started (NaN before)
    std::uint64_t samples_ = 0;
};

// Events of the PLC and the plant, scheduled in plant time. The protocol faults (the first five)
// are acted on by the simulator's Modbus/TCP server; blower trips and power failures by the plant.
enum class event_kind : std::uint8_t {
    link_loss,             // the PLC does not answer: connections closed, new ones refused
    slow_replies,          // replies go out `delay_s` late
    dropped_connections,   // the connection is closed instead of answering
    exception_replies,     // requests are answered with `exception` instead of being done
    wrong_transaction_id,  // replies carry the request's transaction id + 1
    blower_trip,           // one train's blowers stop
    power_failure,         // every blower and pump stops; the power-failure alarm is on
};

struct plant_event {
    event_kind kind = event_kind::link_loss;
    double start_s = 0.0;
    double end_s = std::numeric_limits<double>::infinity();
    std::size_t train = no_index;  // blower_trip: the train
    double delay_s = 0.0;          // slow_replies
    // Protocol faults other than link_loss: which requests they act on, and how.
    std::optional<std::uint8_t> function;  // only this function code (any when empty)
    std::uint16_t first_address = 0;       // only requests touching first..last
    std::uint16_t last_address = 0xFFFF;
    std::uint8_t exception = 4;            // exception_replies: the exception code sent
};

// True for the events the Modbus/TCP server acts on (link loss and the other protocol faults).
[[nodiscard]] bool is_protocol_fault(event_kind kind);

// The state of the PLC link at `t_s`, for the server.
struct link_state {
    bool up = true;
    double reply_delay_s = 0.0;
};
[[nodiscard]] link_state link_at(const std::vector<plant_event>& events, double t_s);
// Indices of the protocol faults other than link loss that are active at `t_s`, in schedule
// order (the server's fault rules).
[[nodiscard]] std::vector<std::size_t> protocol_faults_at(const std::vector<plant_event>& events, double t_s);
// The first start or end of a protocol fault (link loss included) after `t_s`; infinity if none.
[[nodiscard]] double next_protocol_change_after(const std::vector<plant_event>& events, double t_s);
// Indices of the sensor faults active at `t_s`: (sensor, fault) pairs, in scenario order.
[[nodiscard]] std::vector<std::pair<std::size_t, std::size_t>> sensor_faults_at(const std::vector<sensor_spec>& sensors,
                                                                                double t_s);
// A short name of an event kind or a fault kind ("link_loss", "stuck").
[[nodiscard]] std::string_view to_string(event_kind kind);
[[nodiscard]] std::string_view to_string(fault_kind kind);
[[nodiscard]] bool power_failed_at(const std::vector<plant_event>& events, double t_s);
// Controls as the events leave them at `t_s` (blowers and pumps available or not).
void apply_events(const std::vector<plant_event>& events, double t_s, plant_controls& u);

} // namespace floc::sim
