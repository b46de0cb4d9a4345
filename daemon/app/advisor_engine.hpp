// Runs the configured advisors on plant time: gathers each advisor's inputs from the conditioned
// signals and the lab book, calls the pure advisor, keeps its state, and turns the advice into
// what the registers publish and the journal records.
#pragma once

#include "floc/advisors/advice.hpp"
#include "floc/advisors/aeration.hpp"
#include "floc/advisors/ras.hpp"
#include "floc/advisors/recycle.hpp"
#include "floc/advisors/waste.hpp"
#include "floc/conditioning/conditioning.hpp"
#include "floc/config/config.hpp"
#include "floc/registers/image.hpp"
#include "floc/store/state_file.hpp"
#include "lab_book.hpp"

#include <functional>
#include <optional>
#include <string>
#include <variant>
#include <vector>

namespace floc::app {

// Where an advisor's inputs come from at one moment.
struct input_view {
    const std::vector<conditioning::signal>& signals;  // by tag index
    const lab_book& labs;
    double plant_now_s;
    double steady_now_s;  // the conditioning clock, to date samples in plant time
};

// One advisor's latest outcome.
struct advisor_outcome {
    std::string key;                  // "aeration.a_oxic1", stable across restarts and reloads
    advisors::advice advice;
    registers::published_advice published;
    bool changed = false;             // the advised value, quality or main reason changed
    std::vector<std::pair<std::string, advisors::reading>> inputs;  // for the journal
};

class advisor_engine {
public:
    explicit advisor_engine(const config::plant_config& cfg);

    // Runs every advisor that is due at `in.plant_now_s` (or all, with `force`); returns the
    // outcomes of those that ran, in slot order. `recompute_waste` asks the waste advisors for
    // an on-demand recomputation.
    std::vector<std::pair<std::size_t, advisor_outcome>> run_due(const input_view& in, bool force,
                                                                 bool recompute_waste = false);

    // Seconds since each slot's advice was computed (steady clock), for the registers.
    void age(double steady_now_s, std::vector<registers::published_advice>& out) const;

    // The earliest plant time at which an advisor is due again; nothing while any advisor has
    // not run yet (it is due at once) or there are none.
    [[nodiscard]] std::optional<double> next_due() const;

    [[nodiscard]] std::size_t size() const { return slots_.size(); }
    [[nodiscard]] const std::optional<advisor_outcome>& last(std::size_t slot) const { return slots_.at(slot).last; }
    [[nodiscard]] const std::string& key(std::size_t slot) const { return slots_.at(slot).key; }

    void save(store::state_document& doc) const;
    void load(const store::state_document& doc);
    // Takes states from an older engine by key (a config reload).
    void adopt(const advisor_engine& old);

private:
    using any_state = std::variant<advisors::aeration_state, advisors::recycle_state, advisors::ras_state,
                                   advisors::waste_state>;
    struct slot_data {
        std::string key;
        any_state state;
        double period_s = 300.0;
        std::optional<double> next_due_s;
        std::optional<advisor_outcome> last;
        double computed_steady_s = 0.0;
        std::uint16_t changes = 0;
    };

    advisor_outcome run_slot(std::size_t i, const input_view& in, bool recompute_waste);

    const config::plant_config& cfg_;
    std::vector<slot_data> slots_;
};

// The advisor reading of a signal or lab reference (missing when not configured).
[[nodiscard]] advisors::reading reading_of(const config::signal_ref& ref, const input_view& in,
                                           const config::plant_config& cfg);

} // namespace floc::app
