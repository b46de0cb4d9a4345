#include "runtime.hpp"

#include "floc/plc/decode.hpp"
#include "floc/store/files.hpp"

#include <spdlog/logger.h>

#include <cmath>

namespace floc::app {

runtime::runtime(config::plant_config cfg, boost::asio::any_io_executor executor,
                 std::shared_ptr<spdlog::logger> log, std::chrono::steady_clock::time_point epoch)
    : cfg_(std::move(cfg)), executor_(std::move(executor)), log_(std::move(log)), epoch_(epoch),
      map_(registers::build(cfg_)), image_(map_, cfg_), labs_(cfg_), clock_(cfg_.clock.source),
      states_(cfg_.tags.size()), signals_(cfg_.tags.size()), links_(cfg_.plcs.size()),
      polled_(cfg_.plcs.size(), false) {
    for (std::size_t i = 0; i < cfg_.plcs.size(); ++i) {
        plans_.push_back(plc::plan_reads(cfg_, i));
    }
    journal_ = std::make_unique<store::journal>(cfg_.storage.journal);
}

runtime::~runtime() { stop_pollers(); }

double runtime::seconds() const {
    return std::chrono::duration<double>(std::chrono::steady_clock::now() - epoch_).count();
}

std::filesystem::path runtime::state_path() const {
    return std::filesystem::path{cfg_.storage.state_dir} / "flocd-state.toml";
}

void runtime::start_pollers() {
    for (std::size_t i = 0; i < cfg_.plcs.size(); ++i) {
        // The snapshot handler runs on the io_context; it reaches this runtime only through the
        // service, which outlives every posted handler.
        pollers_.push_back(std::make_unique<plc::poller>(
            i, cfg_.plcs[i], plans_[i], executor_, [this](plc::poll_snapshot s) { on_snapshot(s); }));
        pollers_.back()->start();
    }
}

void runtime::stop_pollers() {
    for (auto& p : pollers_) {
        p->stop();
    }
}

void runtime::adopt(const runtime& old) {
    for (std::size_t i = 0; i < cfg_.tags.size(); ++i) {
        if (const config::tag* t = old.cfg_.find_tag(cfg_.tags[i].name)) {
            const auto j = static_cast<std::size_t>(t - old.cfg_.tags.data());
            states_[i] = old.states_[j];
            signals_[i] = old.signals_[j];
        }
    }
    store::state_document doc;
    old.labs_.save(doc);
    labs_.load(doc);
    if (old.clock_.now() && old.clock_.source() == clock_.source()) {
        clock_ = old.clock_;
    }
}

void runtime::on_snapshot(const plc::poll_snapshot& snap) {
    const double now = seconds();
    links_.at(snap.plc) = snap.link;
    polled_.at(snap.plc) = true;
    const auto& plan = plans_.at(snap.plc);
    for (const plc::read_result& r : snap.results) {
        const plc::read_request& req = plan.at(r.request);
        for (const std::size_t ti : req.tags) {
            const config::tag& t = cfg_.tags[ti];
            conditioning::sample s{now, r.ok, 0.0};
            if (r.ok) {
                const std::size_t offset = t.address - req.address;
                s.value = r.bits.empty() ? plc::decode_registers(t, std::span{r.words}.subspan(offset))
                                         : plc::decode_bit(r.bits.at(offset) != 0);
            }
            states_[ti] = conditioning::update(t, states_[ti], s);
            signals_[ti] = conditioning::assess(t, states_[ti], now);
            image_.put_input(ti, signals_[ti], now);
            if (cfg_.clock.source == config::clock_source::plc_tag && cfg_.clock.tag.index == ti &&
                signals_[ti].q == conditioning::quality::good) {
                clock_.tag_time(signals_[ti].value);
            }
        }
    }
}

void runtime::on_tick(std::uint16_t heartbeat, double uptime_s, std::uint16_t config_generation) {
    const double now = seconds();
    if (cfg_.clock.source == config::clock_source::system) {
        const auto wall = std::chrono::system_clock::now();
        const std::time_t tt = std::chrono::system_clock::to_time_t(wall);
        std::tm local{};
        localtime_r(&tt, &local);
        clock_.system_time(std::chrono::duration<double>(wall.time_since_epoch()).count(),
                           static_cast<double>(local.tm_gmtoff));
    }
    bool all_good = true;
    for (std::size_t i = 0; i < cfg_.tags.size(); ++i) {
        signals_[i] = conditioning::assess(cfg_.tags[i], states_[i], now);
        image_.put_input(i, signals_[i], now);
        all_good = all_good && signals_[i].q == conditioning::quality::good;
    }
    for (std::size_t i = 0; i < cfg_.lab.size(); ++i) {
        image_.put_lab(i, labs_.info(i, clock_.now().value_or(0.0)));
    }
    status_.heartbeat = heartbeat;
    status_.uptime_s = uptime_s;
    status_.plant_time_s = clock_.now().value_or(0.0);
    status_.config_generation = config_generation;
    bool all_linked = true;
    for (std::size_t i = 0; i < links_.size() && i < registers::status_offset::max_plcs; ++i) {
        status_.link.at(i) = links_[i].connected;
        status_.poll_age_s.at(i) =
            links_[i].reads_ok == 0
                ? std::numeric_limits<double>::infinity()
                : std::chrono::duration<double>(std::chrono::steady_clock::now() - links_[i].last_ok).count();
    }
    for (const auto& l : links_) {
        all_linked = all_linked && l.connected;
    }
    status_.state = !all_linked ? registers::daemon_state::plc_down
                    : all_good  ? registers::daemon_state::running
                                : registers::daemon_state::degraded;
    status_.journal_ok = journal_ok_;
    status_.state_ok = state_ok_;
    image_.put_status(status_);
}

bool runtime::every_plc_polled() const {
    for (const bool p : polled_) {
        if (!p) {
            return false;
        }
    }
    return true;
}

void runtime::load_state() {
    std::error_code ec;
    const std::filesystem::path path = state_path();
    const auto text = store::read_whole(path, ec);
    if (!text) {
        if (ec != std::errc::no_such_file_or_directory) {
            log_->warn("state file {}: {}; starting without saved state", path.string(), ec.message());
        }
        return;
    }
    const auto parsed = store::parse_state(*text, path.string());
    if (const auto* err = std::get_if<std::string>(&parsed)) {
        // Keep the unreadable file for inspection; never overwrite it silently.
        const std::filesystem::path aside = path.string() + ".unreadable";
        std::filesystem::rename(path, aside, ec);
        log_->error("{}; moved aside to {}; starting without saved state", *err, aside.string());
        return;
    }
    const auto& doc = std::get<store::state_document>(parsed);
    labs_.load(doc);
    log_->info("state restored from {}", path.string());
}

bool runtime::save_state() {
    store::state_document doc;
    labs_.save(doc);
    const std::filesystem::path path = state_path();
    if (const std::error_code ec = store::atomic_write(path, store::to_text(doc))) {
        if (state_ok_) {
            log_->error("cannot write state file {}: {}", path.string(), ec.message());
        }
        state_ok_ = false;
        return false;
    }
    state_ok_ = true;
    return true;
}

void runtime::journal_event(std::string_view event, const std::string& detail) {
    store::json_object line;
    const auto wall = std::chrono::system_clock::now();
    line.add("time_unix_s", std::chrono::duration<double>(wall.time_since_epoch()).count());
    if (clock_.now()) {
        line.add("plant_time_s", *clock_.now());
    } else {
        line.add_null("plant_time_s");
    }
    line.add("event", event);
    line.add("detail", detail);
    if (const std::error_code ec = journal_->append(line)) {
        if (journal_ok_) {
            log_->error("cannot write the advice journal {}: {}", journal_->path().string(), ec.message());
        }
        journal_ok_ = false;
        return;
    }
    journal_ok_ = true;
}

} // namespace floc::app
