#include "service.hpp"

#include "exit_codes.hpp"
#include "floc/config/load.hpp"
#include "floc/store/files.hpp"
#include "notify.hpp"
#include "runtime.hpp"

#include <boost/asio/post.hpp>
#include <spdlog/logger.h>

#include <csignal>
#include <sstream>

namespace floc::app {
namespace {

// Makes the directories the config writes into; an error names the path.
std::error_code prepare_storage(const config::storage_config& s, std::string& failed) {
    for (const std::filesystem::path& dir :
         {std::filesystem::path{s.state_dir}, std::filesystem::path{s.journal}.parent_path()}) {
        if (dir.empty()) {
            continue;
        }
        if (const std::error_code ec = store::ensure_directory(dir)) {
            failed = dir.string();
            return ec;
        }
    }
    return {};
}

std::string once_table(runtime& rt) {
    std::ostringstream out;
    const auto& cfg = rt.cfg();
    out << "inputs of " << cfg.site.name << "\n";
    for (std::size_t i = 0; i < cfg.tags.size(); ++i) {
        const config::tag& t = cfg.tags[i];
        const conditioning::signal& s = rt.input(i);
        const units::unit& u = t.quantity() == units::quantity::state
                                   ? units::canonical_unit(units::quantity::state)
                                   : cfg.display.unit_for(t.quantity());
        out << "  " << t.name << "  "
            << (s.has_value ? units::format(s.value, u) : std::string{"-"}) << "  "
            << conditioning::to_string(s.q) << " (" << conditioning::to_string(s.why) << ")\n";
    }
    return out.str();
}

} // namespace

service::service(boost::asio::io_context& io, config::plant_config cfg, std::shared_ptr<spdlog::logger> log,
                 service_options options)
    : io_(io), log_(std::move(log)), options_(std::move(options)), stop_signals_(io, SIGINT, SIGTERM),
      reload_signal_(io, SIGHUP), tick_(io), started_(std::chrono::steady_clock::now()),
      last_save_(started_) {
    rt_ = std::make_unique<runtime>(std::move(cfg), io_.get_executor(), log_, started_);
}

service::~service() = default;

int service::start() {
    std::string failed;
    if (const std::error_code ec = prepare_storage(rt_->cfg().storage, failed)) {
        log_->critical("cannot create {}: {}", failed, ec.message());
        return exit_cant_create;
    }
    rt_->load_state();
    rt_->journal_event("start", "flocd started with " + rt_->cfg().source_file);
    rt_->start_pollers();
    wait_for_signals();
    schedule_tick();
    log_->info("flocd running for {} ({} PLC, {} tags, {} advisors); advisory only, never writes to a PLC",
               rt_->cfg().site.name, rt_->cfg().plcs.size(), rt_->cfg().tags.size(), rt_->cfg().advisor_count());
    notify_service_manager("READY=1");
    return exit_ok;
}

void service::wait_for_signals() {
    stop_signals_.async_wait([this](const boost::system::error_code& ec, int sig) {
        if (ec) {
            return;
        }
        log_->info("signal {} received: stopping", sig);
        stop();
    });
    wait_for_reload();
}

void service::wait_for_reload() {
    reload_signal_.async_wait([this](const boost::system::error_code& ec, int) {
        if (ec || stopping_) {
            return;
        }
        reload();
        wait_for_reload();
    });
}

void service::schedule_tick() {
    tick_.expires_after(std::chrono::seconds{1});
    tick_.async_wait([this](const boost::system::error_code& ec) {
        if (ec || stopping_) {
            return;
        }
        on_tick();
        if (!stopping_) {
            schedule_tick();
        }
    });
}

void service::on_tick() {
    const auto now = std::chrono::steady_clock::now();
    ++heartbeat_;
    rt_->on_tick(heartbeat_, std::chrono::duration<double>(now - started_).count(), generation_);
    if (now - last_save_ >= options_.state_save_period) {
        rt_->save_state();
        last_save_ = now;
    }
    notify_service_manager("WATCHDOG=1");
    if (options_.once && (rt_->every_plc_polled() || now - started_ >= options_.once_limit)) {
        finish_once();
    }
}

void service::reload() {
    log_->info("SIGHUP received: reloading {}", options_.config_path);
    config::load_result r = config::load_file(options_.config_path);
    if (!r.ok()) {
        for (const auto& e : r.errors) {
            log_->error("{}", e.message());
        }
        log_->error("config reload refused ({} error{}); the running config stays", r.errors.size(),
                    r.errors.size() == 1 ? "" : "s");
        rt_->journal_event("reload_refused", std::to_string(r.errors.size()) + " errors in " + options_.config_path);
        return;
    }
    std::string failed;
    if (const std::error_code ec = prepare_storage(r.config->storage, failed)) {
        log_->error("config reload refused: cannot create {}: {}; the running config stays", failed, ec.message());
        return;
    }
    auto fresh = std::make_unique<runtime>(std::move(*r.config), io_.get_executor(), log_, started_);
    rt_->stop_pollers();
    fresh->adopt(*rt_);
    // Snapshots the old pollers posted before they stopped still point at the old runtime: let
    // them run first, then drop it (the io_context runs handlers in order).
    boost::asio::post(io_, [old = std::move(rt_)]() mutable { old.reset(); });
    rt_ = std::move(fresh);
    ++generation_;
    rt_->save_state();
    rt_->start_pollers();
    rt_->journal_event("reload", "config reloaded from " + options_.config_path);
    log_->info("config reloaded: {} PLC, {} tags, {} advisors", rt_->cfg().plcs.size(), rt_->cfg().tags.size(),
               rt_->cfg().advisor_count());
}

void service::finish_once() {
    for (std::size_t i = 0; i < rt_->links().size(); ++i) {
        if (rt_->links()[i].reads_ok == 0) {
            exit_code_ = exit_unavailable;
            log_->error("--once: PLC {} gave no good reading ({})", rt_->cfg().plcs[i].name,
                        rt_->links()[i].last_error.empty() ? std::string{"no reply"} : rt_->links()[i].last_error);
        }
    }
    rt_->on_tick(heartbeat_, 0.0, generation_);
    once_report_ = once_table(*rt_);
    stop();
}

void service::stop() {
    if (stopping_) {
        return;
    }
    stopping_ = true;
    notify_service_manager("STOPPING=1");
    tick_.cancel();
    stop_signals_.cancel();
    reload_signal_.cancel();
    rt_->stop_pollers();
    rt_->save_state();
    rt_->journal_event("stop", "flocd stopped");
    log_->info("flocd stopped");
}

} // namespace floc::app
