#include "runtime.hpp"

#include "journal_record.hpp"

#include "floc/plc/decode.hpp"
#include "floc/store/files.hpp"

#include <spdlog/logger.h>

#include <algorithm>
#include <cmath>

namespace floc::app {

runtime::runtime(config::plant_config cfg, boost::asio::any_io_executor executor,
                 std::shared_ptr<spdlog::logger> log, std::chrono::steady_clock::time_point epoch)
    : cfg_(std::move(cfg)), executor_(std::move(executor)), log_(std::move(log)), epoch_(epoch),
      map_(registers::build(cfg_)), image_(map_, cfg_), labs_(cfg_), checks_(cfg_), advisors_(cfg_), clock_(cfg_.clock.source),
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
            i, cfg_.plcs[i], plans_[i], executor_, [this](const plc::poll_snapshot& s) { on_snapshot(s); }));
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
    checks_.adopt(old.checks_);
    advisors_.adopt(old.advisors_);
    if (old.clock_.now() && old.clock_.source() == clock_.source()) {
        clock_ = old.clock_;
    }
}

void runtime::on_snapshot(const plc::poll_snapshot& snap) {
    const double now = seconds();
    const plc::link_status& was = links_.at(snap.plc);
    const std::string& plc_name = cfg_.plcs.at(snap.plc).name;
    if (snap.link.connected && (!was.connected || snap.link.connects != was.connects)) {
        log_->info("PLC {} connected ({}:{})", plc_name, cfg_.plcs[snap.plc].host, cfg_.plcs[snap.plc].port);
    } else if (!snap.link.connected && (was.connected || was.reads_ok + was.reads_failed == 0)) {
        log_->warn("PLC {} not reachable: {}", plc_name, snap.link.last_error);
    }
    for (const plc::read_result& r : snap.results) {
        if (!r.ok && snap.link.connected && (was.reads_failed == snap.link.reads_failed || was.last_error != r.error)) {
            log_->warn("PLC {}: read failed: {}", plc_name, r.error);
        }
    }
    links_.at(snap.plc) = snap.link;
    polled_.at(snap.plc) = true;
    const auto& plan = plans_.at(snap.plc);
    std::vector<bool> touched(cfg_.tags.size(), false);
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
            touched[ti] = true;
            if (cfg_.clock.source == config::clock_source::plc_tag && cfg_.clock.tag.index == ti &&
                signals_[ti].q == conditioning::quality::good) {
                clock_.tag_time(signals_[ti].value);
            }
        }
    }
    check_probes();
    for (const config::lab_entry& e : cfg_.lab) {
        if (e.check) {
            touched.at(e.check->tag.index) = true;
        }
    }
    for (std::size_t ti = 0; ti < touched.size(); ++ti) {
        if (touched[ti]) {
            image_.put_input(ti, signals_[ti], now);
        }
    }
    run_advisors(false);
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
    }
    check_probes();
    for (std::size_t i = 0; i < cfg_.tags.size(); ++i) {
        image_.put_input(i, signals_[i], now);
        all_good = all_good && signals_[i].q == conditioning::quality::good;
    }
    for (std::size_t i = 0; i < cfg_.lab.size(); ++i) {
        image_.put_lab(i, labs_.info(i, clock_.now().value_or(0.0)));
    }
    run_advisors(false);
    std::vector<registers::published_advice> aged;
    advisors_.age(now, aged);
    bool advice_good = true;
    for (std::size_t i = 0; i < aged.size(); ++i) {
        if (advisors_.last(i)) {
            image_.put_advice(i, aged[i]);
            advice_good = advice_good && aged[i].quality == 0;
        }
    }
    all_good = all_good && advice_good;
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
    checks_.load(doc);
    advisors_.load(doc);
    log_->info("state restored from {}", path.string());
}

bool runtime::save_state() {
    store::state_document doc;
    labs_.save(doc);
    checks_.save(doc);
    advisors_.save(doc);
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
    line.add("event", event);
    line.add("detail", detail);
    journal_line(line);
}

void runtime::journal_line(const store::json_object& body) {
    const auto wall = std::chrono::system_clock::now();
    const store::json_object line = app::journal_line(
        body, std::chrono::duration<double>(wall.time_since_epoch()).count(), clock_.now(), cfg_.site.name);
    if (const std::error_code ec = journal_->append(line)) {
        if (journal_ok_) {
            log_->error("cannot write the advice journal {}: {}", journal_->path().string(), ec.message());
        }
        journal_ok_ = false;
        return;
    }
    journal_ok_ = true;
}

void runtime::check_probes() {
    const std::optional<double> plant_now = clock_.now();
    if (!plant_now) {
        return;  // no plant time yet: lab samples and the probes' history have no time line
    }
    for (const probe_check_event& e : checks_.run(labs_, states_, seconds(), *plant_now, signals_)) {
        journal_line(probe_check_record(e, cfg_));
        const config::lab_entry& entry = cfg_.lab.at(e.entry);
        const conditioning::check_verdict& v = e.verdict;
        const units::unit& u = shown_unit(cfg_.display, entry.kind);
        const auto shown = [&](double canonical) { return units::format(canonical, u); };
        const double tolerance_shown =
            units::from_canonical(v.check.value + v.tolerance, u) - units::from_canonical(v.check.value, u);
        const std::string& tag = cfg_.tags.at(e.tag).name;
        switch (v.outcome) {
        case conditioning::check_outcome::disagrees:
            log_->warn("probe check {}: {} read {} when the sample was taken, the check {}: more than {:.4g} {} "
                       "apart; {} is bad (check disagrees) until a newer check agrees",
                       entry.name, tag, shown(v.probe), shown(v.check.value), tolerance_shown, u.symbol, tag);
            break;
        case conditioning::check_outcome::agrees:
            log_->info("probe check {}: {} read {} when the sample was taken, the check {}: agrees", entry.name,
                       tag, shown(v.probe), shown(v.check.value));
            break;
        case conditioning::check_outcome::probe_unusable:
        case conditioning::check_outcome::no_probe_value:
            log_->info("probe check {}: {} had no usable value when the sample was taken; not compared",
                       entry.name, tag);
            break;
        }
    }
}

void runtime::run_advisors(bool force) {
    const std::optional<double> plant_now = clock_.now();
    if (!plant_now) {
        return;  // no plant time yet (the PLC's time tag was not read)
    }
    const input_view in{signals_, labs_, *plant_now, seconds()};
    for (auto& [slot, outcome] : advisors_.run_due(in, force)) {
        image_.put_advice(slot, outcome.published);
        if (outcome.changed) {
            journal_line(advice_record(outcome, cfg_));
            log_->debug("{}: {}", outcome.key, outcome.advice.explanation);
        }
    }
}

modbus::refusal runtime::read_registers(std::uint16_t address, std::span<std::uint16_t> out) const {
    const std::uint32_t end = std::uint32_t{address} + static_cast<std::uint32_t>(out.size());
    for (const auto& b : map_.blocks) {
        if (b.count > 0 && address >= b.first && end <= b.end()) {
            const auto words = image_.words(address, static_cast<std::uint16_t>(out.size()));
            std::copy(words.begin(), words.end(), out.begin());
            return modbus::accepted;
        }
    }
    return modbus::exception_code::illegal_data_address;
}

modbus::refusal runtime::write_registers(std::uint16_t address, std::span<const std::uint16_t> values,
                                         const modbus::client_info& client) {
    const std::optional<registers::lab_write> w = registers::decode_lab_write(map_, cfg_, address, values);
    if (!w) {
        return modbus::exception_code::illegal_data_address;
    }
    const bool allowed = std::any_of(cfg_.hmi.lab_writers.begin(), cfg_.hmi.lab_writers.end(),
                                     [&](const config::ipv4_network& n) { return n.contains(client.address_v4); });
    const double now = clock_.now().value_or(0.0);
    const registers::lab_status status = labs_.apply(*w, client.address_v4, allowed, now);
    image_.put_lab(w->entry, labs_.info(w->entry, now));
    const config::lab_entry& e = cfg_.lab.at(w->entry);
    if (w->kind == registers::lab_write::what::minutes_ago && allowed) {
        return modbus::accepted;
    }
    store::json_object r;
    r.add("event", "lab_entry");
    r.add("entry", e.name);
    r.add("value", w->value);
    r.add("unit", units::canonical_unit(e.kind).symbol);
    r.add("from", config::format_network({client.address_v4, 32}));
    r.add("status", status == registers::lab_status::accepted       ? "accepted"
                    : status == registers::lab_status::out_of_range ? "out_of_range"
                    : status == registers::lab_status::not_allowed  ? "not_allowed"
                    : status == registers::lab_status::not_a_number ? "not_a_number"
                                                                    : "other");
    if (status == registers::lab_status::accepted) {
        r.add("sample_time_s", labs_.current(w->entry)->sample_time_s);
    }
    journal_line(r);
    if (!allowed) {
        log_->warn("lab entry {} refused: {} is not in hmi_server.lab_writers", e.name,
                   config::format_network({client.address_v4, 32}));
        return modbus::exception_code::illegal_function;
    }
    if (status == registers::lab_status::accepted) {
        log_->info("lab entry {} = {} from {}", e.name,
                   units::format(w->value, e.kind == units::quantity::dimensionless ? units::canonical_unit(e.kind)
                                                                                   : cfg_.display.unit_for(e.kind)),
                   config::format_network({client.address_v4, 32}));
        if (e.check) {
            // A check reading counts at once: its probe's input slot follows before the next poll.
            check_probes();
            image_.put_input(e.check->tag.index, signals_.at(e.check->tag.index), seconds());
        }
        if (!save_state()) {
            labs_.mark_store_failed(w->entry);
            image_.put_lab(w->entry, labs_.info(w->entry, now));
        }
    }
    // Out of range and not-a-number entries are answered normally: the protocol carried the
    // value correctly; the slot's status register says why it was not taken (the Modbus
    // specification reserves exception 03 for malformed requests, not for application limits).
    return modbus::accepted;
}

} // namespace floc::app
