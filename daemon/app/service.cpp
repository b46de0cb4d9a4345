#include "service.hpp"

#include "exit_codes.hpp"
#include "floc/config/load.hpp"
#include "floc/store/files.hpp"
#include "notify.hpp"
#include "runtime.hpp"

#include <boost/asio/post.hpp>
#include <spdlog/logger.h>

#include <algorithm>
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
    out << "advice (advisory only: a licensed operator decides)\n";
    for (std::size_t i = 0; i < rt.advisors().size(); ++i) {
        const auto& last = rt.advisors().last(i);
        if (!last) {
            out << "  " << rt.advisors().key(i) << "  -  not computed (no plant time yet)\n";
            continue;
        }
        const advisors::advice& a = last->advice;
        const units::unit& u = a.kind == units::quantity::dimensionless ? units::canonical_unit(a.kind)
                                                                          : cfg.display.unit_for(a.kind);
        out << "  " << last->key << "  " << units::format(a.value, u) << "  " << advisors::to_string(a.quality)
            << "  " << a.explanation << "\n";
    }
    return out.str();
}

} // namespace

// The HMI server's register space: the current runtime's register image, and its lab block.
class hmi_space final : public modbus::register_space {
public:
    explicit hmi_space(std::unique_ptr<runtime>& rt) : rt_(rt) {}

    modbus::refusal read_bits(modbus::table, std::uint16_t, std::span<std::uint8_t>,
                              const modbus::client_info&) override {
        return modbus::exception_code::illegal_function;  // floc serves registers only
    }
    modbus::refusal read_registers(modbus::table from, std::uint16_t address, std::span<std::uint16_t> out,
                                   const modbus::client_info&) override {
        if (from != modbus::table::holding_registers && from != modbus::table::input_registers) {
            return modbus::exception_code::illegal_function;
        }
        return rt_->read_registers(address, out);
    }
    modbus::refusal write_coils(std::uint16_t, std::span<const std::uint8_t>, const modbus::client_info&) override {
        return modbus::exception_code::illegal_function;
    }
    modbus::refusal write_registers(std::uint16_t address, std::span<const std::uint16_t> values,
                                    const modbus::client_info& client) override {
        return rt_->write_registers(address, values, client);
    }

private:
    std::unique_ptr<runtime>& rt_;
};

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
    if (const int code = start_server(); code != exit_ok) {
        return code;
    }
    rt_->journal_event("start", "flocd started with " + rt_->cfg().source_file);
    rt_->start_pollers();
    wait_for_signals();
    schedule_tick();
    log_->info("flocd running for {} ({} PLC, {} tags, {} advisors); advisory only, never writes to a PLC",
               rt_->cfg().site.name, rt_->cfg().plcs.size(), rt_->cfg().tags.size(), rt_->cfg().advisor_count());
    notify_service_manager("READY=1");
    return exit_ok;
}

int service::start_server() {
    const config::hmi_server_config& h = rt_->cfg().hmi;
    if (!space_) {
        space_ = std::make_unique<hmi_space>(rt_);
    }
    modbus::server_options o;
    o.address = h.bind;
    o.port = h.port;
    o.max_connections = h.max_connections;
    o.idle_timeout = std::chrono::milliseconds{static_cast<std::int64_t>(h.idle_timeout_s * 1000.0)};
    o.identity.vendor_name = "floc project";
    o.identity.product_code = "FLOCD";
    o.identity.revision = FLOC_VERSION_TEXT;
    o.identity.product_name = "floc advisory service (advisory only)";
    o.identity.application_name = rt_->cfg().site.name;
    o.allow = [this](std::uint32_t address) {
        const auto& allow = rt_->cfg().hmi.allow;
        return std::any_of(allow.begin(), allow.end(), [&](const config::ipv4_network& n) { return n.contains(address); });
    };
    o.on_event = [log = log_](const modbus::server_event& e) {
        const std::string who = config::format_network({e.client.address_v4, 32}) + ":" + std::to_string(e.client.port);
        switch (e.kind) {
        case modbus::event_kind::connection_opened: log->info("HMI {} connected", who); break;
        case modbus::event_kind::connection_closed: log->info("HMI {} disconnected ({})", who, modbus::to_string(e.reason)); break;
        case modbus::event_kind::connection_refused: log->warn("HMI {} refused ({})", who, modbus::to_string(e.reason)); break;
        case modbus::event_kind::frame_discarded: log->warn("HMI {}: frame with a foreign protocol id discarded", who); break;
        case modbus::event_kind::accept_failed: log->error("HMI server: accept failed: {}", e.detail); break;
        }
    };
    server_ = std::make_unique<modbus::server>(io_, *space_, std::move(o));
    if (const auto err = server_->start()) {
        log_->critical("cannot serve the HMI on {}:{}: {}", h.bind, h.port, *err);
        server_.reset();
        return exit_os_error;
    }
    log_->info("serving advice to HMIs on {}:{}", h.bind, server_->port());
    return exit_ok;
}

std::uint16_t service::hmi_port() const { return server_ ? server_->port() : 0; }

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
    const config::hmi_server_config before = rt_->cfg().hmi;
    auto fresh = std::make_unique<runtime>(std::move(*r.config), io_.get_executor(), log_, started_);
    const config::hmi_server_config& after = fresh->cfg().hmi;
    const bool new_socket = before.bind != after.bind || before.port != after.port ||
                            before.max_connections != after.max_connections ||
                            before.idle_timeout_s != after.idle_timeout_s;
    rt_->stop_pollers();
    fresh->adopt(*rt_);
    // Snapshots the old pollers posted before they stopped still point at the old runtime: let
    // them run first, then drop it (the io_context runs handlers in order).
    boost::asio::post(io_, [old = std::move(rt_)]() mutable { old.reset(); });
    rt_ = std::move(fresh);
    ++generation_;
    if (new_socket) {
        server_->stop();
        boost::asio::post(io_, [old = std::move(server_)]() mutable { old.reset(); });
        if (start_server() != exit_ok) {
            log_->error("the HMI server could not move to {}:{}; no HMI is served until the next reload",
                        after.bind, after.port);
        }
    }
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
    rt_->run_advisors(true);
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
    if (server_) {
        server_->stop();
    }
    rt_->save_state();
    rt_->journal_event("stop", "flocd stopped");
    log_->info("flocd stopped");
}

} // namespace floc::app
