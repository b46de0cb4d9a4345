// Everything flocd builds from one config: the register map and image, the conditioning state of
// every tag, the lab book, the pollers and the plant clock. A reload builds a new runtime and
// carries state over by name.
#pragma once

#include "advisor_engine.hpp"
#include "floc/conditioning/conditioning.hpp"
#include "floc/modbus/register_space.hpp"
#include "floc/config/config.hpp"
#include "floc/plc/poller.hpp"
#include "floc/registers/image.hpp"
#include "floc/store/journal.hpp"
#include "floc/store/state_file.hpp"
#include "lab_book.hpp"
#include "plant_clock.hpp"

#include <boost/asio/any_io_executor.hpp>

#include <filesystem>
#include <memory>
#include <vector>

namespace spdlog {
class logger;
}

namespace floc::app {

class runtime {
public:
    runtime(config::plant_config cfg, boost::asio::any_io_executor executor, std::shared_ptr<spdlog::logger> log,
            std::chrono::steady_clock::time_point epoch);
    ~runtime();

    runtime(const runtime&) = delete;
    runtime& operator=(const runtime&) = delete;
    runtime(runtime&&) = delete;
    runtime& operator=(runtime&&) = delete;

    void start_pollers();
    void stop_pollers();

    // Takes over conditioning states, lab entries, probe checks and advisor states from an older
    // runtime, matching by name.
    void adopt(const runtime& old);

    void on_snapshot(const plc::poll_snapshot& snap);
    // Once a second: staleness, status registers, heartbeat.
    void on_tick(std::uint16_t heartbeat, double uptime_s, std::uint16_t config_generation);

    // Runs the advisors that are due (all of them with `force`) and publishes their advice.
    void run_advisors(bool force);

    // The HMI's view: reads of the register image, writes of lab entries.
    [[nodiscard]] modbus::refusal read_registers(std::uint16_t address, std::span<std::uint16_t> out) const;
    [[nodiscard]] modbus::refusal write_registers(std::uint16_t address, std::span<const std::uint16_t> values,
                                                  const modbus::client_info& client);

    // State file: load at start, save periodically and at stop.
    void load_state();
    bool save_state();
    void journal_event(std::string_view event, const std::string& detail);
    void journal_line(const store::json_object& line);

    [[nodiscard]] const config::plant_config& cfg() const { return cfg_; }
    [[nodiscard]] const registers::register_map& map() const { return map_; }
    [[nodiscard]] registers::image& img() { return image_; }
    [[nodiscard]] lab_book& labs() { return labs_; }
    [[nodiscard]] const plant_clock& clock() const { return clock_; }
    [[nodiscard]] double seconds() const;  // steady seconds since the service started
    [[nodiscard]] const conditioning::signal& input(std::size_t tag) const { return signals_.at(tag); }
    [[nodiscard]] bool every_plc_polled() const;
    [[nodiscard]] const std::vector<plc::link_status>& links() const { return links_; }
    [[nodiscard]] const advisor_engine& advisors() const { return advisors_; }
    [[nodiscard]] std::filesystem::path state_path() const;

private:
    // The probe checks' round at the current plant time (signals_ of the checked tags become
    // their signals after the check); journals and logs the checks judged.
    void check_probes();

    config::plant_config cfg_;
    boost::asio::any_io_executor executor_;
    std::shared_ptr<spdlog::logger> log_;
    std::chrono::steady_clock::time_point epoch_;
    registers::register_map map_;
    registers::image image_;
    lab_book labs_;
    probe_checks checks_;
    advisor_engine advisors_;
    plant_clock clock_;
    std::vector<conditioning::state> states_;
    std::vector<conditioning::signal> signals_;
    std::vector<std::vector<plc::read_request>> plans_;
    std::vector<std::unique_ptr<plc::poller>> pollers_;
    std::vector<plc::link_status> links_;
    std::vector<bool> polled_;
    std::unique_ptr<store::journal> journal_;
    bool journal_ok_ = true;
    bool state_ok_ = true;
    registers::status_info status_;
};

} // namespace floc::app
