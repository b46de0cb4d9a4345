// Lab entries the operator types in on the HMI: range-checked, acknowledged, remembered across
// restarts (through the state file) and handed to the advisors with their sample time; and the
// probe checks of the entries that are check readings of a tag. Pure.
#pragma once

#include "floc/conditioning/conditioning.hpp"
#include "floc/conditioning/probe_check.hpp"
#include "floc/config/config.hpp"
#include "floc/registers/image.hpp"
#include "floc/store/state_file.hpp"

#include <cstdint>
#include <optional>
#include <span>
#include <vector>

namespace floc::app {

struct lab_sample {
    double value = 0.0;          // canonical unit of the entry's quantity
    double sample_time_s = 0.0;  // plant time the sample was taken
    double entered_at_s = 0.0;   // plant time it was entered
    std::uint32_t entered_by = 0; // IPv4 address (host order) of the HMI that wrote it
};

class lab_book {
public:
    explicit lab_book(const config::plant_config& cfg);

    // Applies one decoded write from `client` at plant time `now_s`. `allowed` tells whether the
    // client may write lab entries at all. Returns the acknowledgement the slot shows.
    registers::lab_status apply(const registers::lab_write& w, std::uint32_t client, bool allowed,
                                double now_s);

    [[nodiscard]] const std::optional<lab_sample>& current(std::size_t entry) const {
        return entries_.at(entry).sample;
    }
    // The current sample, if younger than the entry's max_age at `now_s`.
    [[nodiscard]] std::optional<lab_sample> fresh(std::size_t entry, double now_s) const;
    [[nodiscard]] registers::lab_info info(std::size_t entry, double now_s) const;
    [[nodiscard]] std::size_t size() const { return entries_.size(); }

    // The accepted entry could not be persisted: the slot says so.
    void mark_store_failed(std::size_t entry) { entries_.at(entry).status = registers::lab_status::store_failed; }

    void save(store::state_document& doc) const;
    // Restores entries by name; entries no longer in the config are dropped, values outside the
    // (possibly new) range are dropped.
    void load(const store::state_document& doc);

private:
    struct slot {
        std::optional<lab_sample> sample;
        registers::lab_status status = registers::lab_status::none;
        std::uint16_t entries = 0;
        std::uint16_t pending_minutes_ago = 0;
    };
    const config::plant_config& cfg_;
    std::vector<slot> entries_;
};

// A check reading judged against its probe (README.md, "Probe checks").
struct probe_check_event {
    std::size_t entry = 0;  // the lab entry
    std::size_t tag = 0;    // the tag it checks
    conditioning::check_verdict verdict;
};

// The probe checks of every lab entry that names a tag (`checks`), one state per such entry: the
// service and `flocd replay` condition their signals through the same round. Pure.
class probe_checks {
public:
    explicit probe_checks(const config::plant_config& cfg);

    probe_checks(const probe_checks&) = delete;
    probe_checks& operator=(const probe_checks&) = delete;
    probe_checks(probe_checks&&) = delete;
    probe_checks& operator=(probe_checks&&) = delete;
    ~probe_checks() = default;

    // One round at plant time `plant_now_s`: each checked tag's own signal (assessed from
    // `states` at conditioning time `steady_now_s`) goes into its history, a new check reading
    // in `labs` is judged, and `signals[tag]` becomes the signal after its check. Returns the
    // check readings judged in this round.
    std::vector<probe_check_event> run(const lab_book& labs, std::span<const conditioning::state> states,
                                       double steady_now_s, double plant_now_s,
                                       std::span<conditioning::signal> signals);

    // Takes over histories and verdicts from an older config, matching by the checked tag's name.
    void adopt(const probe_checks& old);
    // The verdicts (not the histories) go into the state file, so that a disagreeing check
    // still counts after a restart.
    void save(store::state_document& doc) const;
    void load(const store::state_document& doc);

    [[nodiscard]] const conditioning::probe_check_state* state_of_tag(std::size_t tag) const;

private:
    struct checked {
        std::size_t entry = 0;
        std::size_t tag = 0;
        conditioning::probe_check_state state;
    };
    const config::plant_config& cfg_;
    std::vector<checked> checks_;
};

} // namespace floc::app
