#include "serve.hpp"

#include "exit_codes.hpp"
#include "report.hpp"

#include "floc/config/load.hpp"
#include "floc/modbus/asio.hpp"
#include "floc/modbus/server.hpp"
#include "floc/registers/register_map.hpp"
#include "floc/sim/hmi_operator.hpp"
#include "floc/sim/lab_technician.hpp"
#include "floc/sim/lab_writer.hpp"
#include "floc/sim/modbus_reader.hpp"
#include "floc/sim/plc_host.hpp"
#include "floc/store/files.hpp"
#include "floc/store/json.hpp"

#include <unistd.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <csignal>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <limits>
#include <map>
#include <memory>

namespace floc::app {
namespace {

namespace asio = boost::asio;
using steady = std::chrono::steady_clock;

constexpr double max_chunk_s = 300.0;                       // plant time per advance, at most
constexpr auto speed_tick = std::chrono::milliseconds{100}; // --speed: advance every tick
constexpr auto work_budget = std::chrono::milliseconds{40}; // then let the server answer
constexpr auto idle_step_every = std::chrono::seconds{1};   // lockstep while reads are blocked
constexpr auto rebind_retry = std::chrono::seconds{1}; // after a link loss, if the port is taken
constexpr auto tty_status_every = std::chrono::milliseconds{250};
constexpr auto tty_table_every = std::chrono::seconds{1};
constexpr auto plain_table_every = std::chrono::seconds{5};

std::string duration_text(double s) {
    std::array<char, 32> buf{};
    if (s >= 3600.0 && std::fmod(s, 3600.0) == 0.0) {
        std::snprintf(buf.data(), buf.size(), "%g h", s / 3600.0);
    } else if (s >= 60.0 && std::fmod(s, 60.0) == 0.0) {
        std::snprintf(buf.data(), buf.size(), "%g min", s / 60.0);
    } else {
        std::snprintf(buf.data(), buf.size(), "%g s", s);
    }
    return buf.data();
}

std::string address_text(std::uint32_t a) {
    return std::to_string(a >> 24U) + "." + std::to_string((a >> 16U) & 0xFFU) + "." +
           std::to_string((a >> 8U) & 0xFFU) + "." + std::to_string(a & 0xFFU);
}

void merge(std::map<std::uint32_t, modbus::client_record>& into,
           const std::map<std::uint32_t, modbus::client_record>& from) {
    for (const auto& [address, record] : from) {
        modbus::client_record& r = into[address];
        for (std::size_t fc = 0; fc < r.by_function.size(); ++fc) {
            r.by_function.at(fc) += record.by_function.at(fc);
        }
    }
}

// {"clients":[{"address":"127.0.0.1","requests":N,"writes":W,"by_function":{"3":n,"4":n}}]}
std::string client_log_json(const std::map<std::uint32_t, modbus::client_record>& clients) {
    std::vector<store::json_object> list;
    for (const auto& [address, record] : clients) {
        store::json_object by_function;
        for (std::size_t fc = 0; fc < record.by_function.size(); ++fc) {
            if (record.by_function.at(fc) != 0) {
                by_function.add(std::to_string(fc), record.by_function.at(fc));
            }
        }
        store::json_object c;
        c.add("address", address_text(address));
        c.add("requests", record.total());
        c.add("writes", record.writes());
        c.add("by_function", by_function);
        list.push_back(std::move(c));
    }
    store::json_object root;
    root.add("clients", list);
    return root.str() + "\n";
}

class plant_server {
public:
    // `signals` is set up before the start state is computed, so that a signal meanwhile stops
    // the run as soon as it starts.
    plant_server(asio::io_context& io, asio::signal_set& signals, const sim::scenario& s,
                 const serve_options& o, std::vector<double> x0,
                 std::optional<config::plant_config> hmi_cfg)
        : io_(io), s_(s), o_(o), host_(s, std::move(x0)),
          space_(host_,
                 {[this] { catch_up(); }, [this] { on_plant_time_read(); },
                  [this](const modbus::client_info& c, modbus::refusal r) { on_write(c, r); }}),
          signals_(signals), clock_timer_(io), idle_timer_(io), rebind_timer_(io),
          hmi_cfg_(std::move(hmi_cfg)), stderr_tty_(::isatty(STDERR_FILENO) == 1),
          stdout_tty_(::isatty(STDOUT_FILENO) == 1) {
        server_options_.address = o_.bind;
        server_options_.port = o_.port.value_or(s_.server.port);
        server_options_.max_connections = s_.server.max_connections;
        server_options_.idle_timeout =
            std::chrono::milliseconds{static_cast<std::int64_t>(s_.server.idle_timeout_s * 1000.0)};
        server_options_.identity.vendor_name = "floc project";
        server_options_.identity.product_code = "FLOCSIM";
        server_options_.identity.revision = FLOC_VERSION;
        server_options_.identity.product_name = "flocsim simulated PLC (a simulator, not a plant)";
        server_options_.identity.application_name = s_.name;
        if (hmi_cfg_) {
            hmi_map_ = registers::build(*hmi_cfg_);
            op_ =
                std::make_unique<sim::operator_standin>(s_, hmi_map_, *hmi_cfg_, o_.apply_delay_s);
            if (o_.enter_lab) {
                lab_ = std::make_unique<sim::lab_technician>(s_, hmi_map_, *hmi_cfg_);
            }
        }
    }
    plant_server(const plant_server&) = delete;
    plant_server& operator=(const plant_server&) = delete;

    // Binds and starts; prints the serving line. An exit code other than 0 when it cannot.
    int start() {
        // Files written at exit: their directories must be there from the start.
        for (const std::string& file : {o_.client_log, o_.json}) {
            const std::filesystem::path dir = std::filesystem::path{file}.parent_path();
            std::error_code ec;
            if (!file.empty() && !dir.empty() && !std::filesystem::is_directory(dir, ec)) {
                std::cerr << "flocsim: " << file << ": cannot be written: " << dir.string()
                          << " is not a directory\n";
                return exit_cant_create;
            }
        }
        if (!o_.trend.empty()) {
            trend_.open(o_.trend);
            if (!trend_) {
                std::cerr << "flocsim: " << o_.trend << ": cannot write the trend file\n";
                return exit_cant_create;
            }
            write_csv_header(trend_, s_);
            write_csv_row(trend_, s_, host_.sim());
            next_row_s_ = o_.trend_interval_s;
        }
        server_ = std::make_unique<modbus::server>(io_, space_, server_options_);
        if (const auto err = server_->start()) {
            std::cerr << "flocsim: " << *err << "\n";
            return exit_os_error;
        }
        port_ = server_->port();
        server_options_.port = port_; // a restart after a link loss binds the same port
        std::cout << "flocsim: serving " << s_.name << " on " << o_.bind << ":" << port_
                  << std::endl;
        signals_.async_wait([this](const boost::system::error_code& ec, int) {
            if (!ec) {
                stop(exit_ok);
            }
        });
        wall_start_ = steady::now();
        if (lab_) {
            const std::vector<std::string> left = lab_->not_on_sheet();
            if (!left.empty()) {
                std::string names;
                for (const std::string& n : left) {
                    names += (names.empty() ? "" : ", ") + n;
                }
                log_line("lab sheet: flocd's lab entries " + names +
                         " are not on the scenario's lab sheet and are not typed in");
            }
        }
        after_advance();
        if (hmi_cfg_) {
            start_reader();
        }
        switch (o_.clock) {
        case clock_mode::speed:
            schedule_clock(speed_tick);
            break;
        case clock_mode::fast:
            schedule_clock(std::chrono::milliseconds{0});
            break;
        case clock_mode::lockstep:
            schedule_idle();
            break;
        }
        return exit_ok;
    }

    // After io_context::run returned: the files written at exit.
    int finish() {
        if (o_.status && stderr_tty_) {
            std::cerr << "\n";
        }
        int code = exit_code_;
        if (trend_.is_open()) {
            trend_.close();
            if (trend_.fail()) {
                std::cerr << "flocsim: writing the trend file " << o_.trend << " failed\n";
                code = code == exit_ok ? exit_io_error : code;
            }
        }
        if (!o_.json.empty()) {
            std::ofstream json(o_.json);
            write_json(json, s_, host_.sim());
            json.close();
            if (json.fail()) {
                std::cerr << "flocsim: " << o_.json << ": cannot write the state file\n";
                code = code == exit_ok ? exit_cant_create : code;
            }
        }
        if (!o_.client_log.empty()) {
            std::map<std::uint32_t, modbus::client_record> all = past_clients_;
            if (server_) {
                merge(all, server_->clients());
            }
            if (const std::error_code ec =
                    store::atomic_write(o_.client_log, client_log_json(all))) {
                std::cerr << "flocsim: " << o_.client_log
                          << ": cannot write the client log: " << ec.message() << "\n";
                code = code == exit_ok ? exit_cant_create : code;
            }
        }
        return code;
    }

private:
    // --- plant time ------------------------------------------------------------------------
    void schedule_clock(std::chrono::milliseconds after) {
        clock_timer_.expires_after(after);
        clock_timer_.async_wait([this](const boost::system::error_code& ec) {
            if (!ec && !stopping_) {
                on_clock();
            }
        });
    }

    // --speed and --fast: advance towards the plant time the wall clock asks for, in chunks,
    // for at most `work_budget`, then let the server answer.
    void on_clock() {
        const auto began = steady::now();
        const double wanted =
            o_.clock == clock_mode::fast
                ? std::numeric_limits<double>::infinity()
                : o_.speed * std::chrono::duration<double>(began - wall_start_).count();
        while (!stopping_ && host_.time_s() < wanted && steady::now() - began < work_budget) {
            advance(next_stop(wanted));
        }
        if (stopping_) {
            return;
        }
        schedule_clock(host_.time_s() < wanted ? std::chrono::milliseconds{0} : speed_tick);
    }

    // The next plant time to stop at on the way to `wanted`: a chunk at most, and every instant
    // something is due (a fault starts or ends, a trend row, an operator's application, a lab
    // sample, --for).
    [[nodiscard]] double next_stop(double wanted) const {
        const double t = host_.time_s();
        double stop = std::min(wanted, t + max_chunk_s);
        stop = std::min(stop, sim::next_protocol_change_after(host_.sim().events(), t));
        if (trend_.is_open()) {
            stop = std::min(stop, next_row_s_);
        }
        if (op_) {
            stop = std::min(stop, std::max(op_->next_due_s(), t + 1e-3));
        }
        if (lab_) {
            stop = std::min(stop, std::max(lab_->next_sample_s(), t + 1e-3));
        }
        if (o_.for_s) {
            stop = std::min(stop, *o_.for_s);
        }
        return std::max(stop, t + 1e-3);
    }

    // Advances to `t_s`, stopping at every lab sample on the way (a lockstep step may cross one).
    void advance(double t_s) {
        while (lab_ && !stopping_ && lab_->next_sample_s() < t_s - 1e-6 &&
               lab_->next_sample_s() > host_.time_s() + 1e-6) {
            step_to(lab_->next_sample_s());
        }
        if (!stopping_) {
            step_to(t_s);
        }
    }

    void step_to(double t_s) {
        if (!host_.advance_to(t_s)) {
            std::cerr << "\nflocsim: " << host_.sim().error() << "\n";
            stop(exit_software);
            return;
        }
        after_advance();
    }

    // --lockstep: a read of the plant-time registers is answered, then the plant takes a step.
    // The step is posted, so that the reply goes out first; any register access that comes
    // before it runs takes the step first, so every read sees every step before it.
    void on_plant_time_read() {
        if (o_.clock != clock_mode::lockstep || stopping_) {
            return;
        }
        time_read_since_idle_ = true;
        ++pending_steps_;
        asio::post(io_, [this] { catch_up(); });
    }

    void catch_up() {
        while (pending_steps_ > 0 && !stopping_) {
            --pending_steps_;
            advance(host_.time_s() + o_.lockstep_s);
        }
    }

    // --lockstep: while a protocol fault or a link loss is on and no client has read the plant
    // time for a wall second, the plant takes one step per wall second, so that the fault ends.
    // A fault need not touch the plant-time registers to keep a client from them: a client that
    // gives up on a late reply to another request reconnects and starts its poll afresh.
    void schedule_idle() {
        idle_timer_.expires_after(idle_step_every);
        idle_timer_.async_wait([this](const boost::system::error_code& ec) {
            if (ec || stopping_) {
                return;
            }
            if ((link_down_ || !active_faults_.empty()) && !time_read_since_idle_) {
                advance(host_.time_s() + o_.lockstep_s);
            }
            time_read_since_idle_ = false;
            if (!stopping_) {
                schedule_idle();
            }
        });
    }

    // Everything that follows plant time: the operator's applications, the lab samples, the
    // protocol faults, the trend, the status line, --for.
    void after_advance() {
        const double t = host_.time_s();
        if (op_ && op_->applies()) {
            apply_operator(t);
        }
        if (lab_ && t >= lab_->next_sample_s() - 1e-6) {
            lab_->sample(t, host_.sim().outputs());
        }
        apply_fault_schedule(t);
        while (trend_.is_open() && t >= next_row_s_ - 1e-6) {
            write_csv_row(trend_, s_, host_.sim());
            while (next_row_s_ <= t + 1e-6) {
                next_row_s_ += o_.trend_interval_s;
            }
        }
        show_status(t);
        if (o_.for_s && t >= *o_.for_s - 1e-6) {
            stop(exit_ok);
        }
    }

    void apply_operator(double t) {
        if (op_->next_due_s() > t) {
            return;
        }
        sim::plant_controls u = host_.sim().controls();
        const std::vector<std::string> changes = op_->apply_due(t, host_.sim().outputs(), u);
        if (changes.empty()) {
            return;
        }
        host_.set_controls(u);
        for (const std::string& c : changes) {
            operator_line(t, c);
        }
    }

    // What the operator did, on standard error; not while the live table on a terminal shows it.
    void operator_line(double t, const std::string& what) {
        if (!(o_.show_advice && stdout_tty_)) {
            log_line("operator at " + sim::plant_clock_text(t) + ": " + what);
        }
    }

    // --- protocol faults ---------------------------------------------------------------------
    void apply_fault_schedule(double t) {
        const auto& events = host_.sim().events();
        const bool down = !sim::link_at(events, t).up;
        if (down && !link_down_) {
            link_lost();
        } else if (!down && link_down_) {
            link_restored();
        }
        std::vector<std::size_t> active = sim::protocol_faults_at(events, t);
        if (active != active_faults_) {
            active_faults_ = std::move(active);
            if (server_) {
                server_->set_faults(sim::fault_rules(events, active_faults_));
            }
        }
    }

    // The PLC stops answering: every connection is closed and the port is closed, so new
    // connections are refused, until the link comes back.
    void link_lost() {
        link_down_ = true;
        if (server_) {
            merge(past_clients_, server_->clients());
            server_->stop();
            // The session being answered may be this server's; let its handler return first.
            asio::post(io_, [old = std::move(server_)]() mutable { old.reset(); });
        }
    }

    void link_restored() {
        link_down_ = false;
        rebind();
    }

    void rebind() {
        if (stopping_ || link_down_ || server_) {
            return;
        }
        auto fresh = std::make_unique<modbus::server>(io_, space_, server_options_);
        if (const auto err = fresh->start()) {
            log_line("link back, but " + *err + "; trying again in 1 s");
            rebind_timer_.expires_after(rebind_retry);
            rebind_timer_.async_wait([this](const boost::system::error_code& ec) {
                if (!ec) {
                    rebind();
                }
            });
            return;
        }
        server_ = std::move(fresh);
        server_->set_faults(sim::fault_rules(host_.sim().events(), active_faults_));
    }

    void on_write(const modbus::client_info& client, modbus::refusal r) {
        log_line("bench write from " + address_text(client.address_v4) + ": " + host_.last_write() +
                 (r ? " (exception " + std::to_string(static_cast<int>(*r)) + ")" : ""));
        if (!r) {
            show_status(host_.time_s());
        }
    }

    // --- the operator stand-in ---------------------------------------------------------------
    void start_reader() {
        reads_ = sim::advisory_reads(hmi_map_);
        sim::reader_options ro;
        ro.address = o_.hmi_address;
        ro.port = o_.hmi_port;
        reader_ = std::make_unique<sim::modbus_reader>(
            io_, ro, reads_, [this](const sim::read_cycle& c) { on_advice(c); });
        reader_->start();
        if (lab_) {
            lab_writer_ = std::make_unique<sim::modbus_lab_writer>(io_, ro);
        }
        show_table(true);
    }

    void on_advice(const sim::read_cycle& c) {
        const bool was_connected = hmi_connected_;
        const std::string old_error = hmi_error_;
        hmi_connected_ = c.ok;
        hmi_error_ = c.error;
        if (c.ok) {
            const sim::advisory_seen seen =
                sim::decode_advisory(hmi_map_, *hmi_cfg_, reads_, c.words);
            op_->observe(seen, host_.time_s());
            if (op_->applies()) {
                apply_operator(host_.time_s());
            }
            if (lab_) {
                enter_lab(seen);
            }
        }
        show_table(was_connected != hmi_connected_ || old_error != hmi_error_);
    }

    // The lab results due now, typed into flocd on the lab writer's own connection; one batch at
    // a time, each outcome on standard error and in the table.
    void enter_lab(const sim::advisory_seen& seen) {
        if (lab_writer_->busy()) {
            return;
        }
        std::vector<sim::lab_typing> typings = lab_->take_due(host_.time_s(), seen);
        if (typings.empty()) {
            return;
        }
        std::vector<sim::register_job> jobs;
        jobs.reserve(typings.size());
        for (const sim::lab_typing& t : typings) {
            jobs.push_back(t.job);
        }
        lab_writer_->run(std::move(jobs), [this, typings = std::move(typings)](
                                              const std::vector<sim::job_outcome>& outcomes) {
            const double t = host_.time_s();
            for (std::size_t i = 0; i < typings.size() && i < outcomes.size(); ++i) {
                operator_line(t, lab_->record(typings[i], outcomes[i], t));
            }
            show_table(true);
        });
    }

    void show_table(bool changed) {
        if (!o_.show_advice) {
            return;
        }
        const auto now = steady::now();
        const auto every = stdout_tty_
                               ? std::chrono::duration_cast<steady::duration>(tty_table_every)
                               : std::chrono::duration_cast<steady::duration>(plain_table_every);
        if (!changed && table_shown_ && now - last_table_ < every) {
            return;
        }
        table_shown_ = true;
        last_table_ = now;
        sim::table_context ctx;
        ctx.source = o_.hmi_address + ":" + std::to_string(o_.hmi_port);
        ctx.connected = hmi_connected_;
        ctx.error = hmi_error_;
        ctx.serving = o_.bind + ":" + std::to_string(port_);
        ctx.plant_time_s = host_.time_s();
        ctx.clock = clock_text();
        if (lab_) {
            ctx.lab = lab_->render();
        }
        const std::string table = sim::render_advice_table(hmi_map_, *hmi_cfg_, *op_, ctx);
        if (stdout_tty_) {
            std::cout << "\x1b[H\x1b[2J" << table << std::flush; // home, clear, redraw
        } else {
            std::cout << "\n" << table << std::flush;
        }
    }

    [[nodiscard]] std::string clock_text() const {
        switch (o_.clock) {
        case clock_mode::speed: {
            if (o_.speed == 1.0) {
                return "real time";
            }
            std::array<char, 32> buf{};
            std::snprintf(buf.data(), buf.size(), "x%g", o_.speed);
            return buf.data();
        }
        case clock_mode::fast:
            return "as fast as possible";
        case clock_mode::lockstep:
            return "lockstep " + duration_text(o_.lockstep_s);
        }
        return {};
    }

    // --- output ------------------------------------------------------------------------------
    // --status: rewritten in place on a terminal (at most four times a second), else one line
    // per plant hour.
    void show_status(double t) {
        if (!o_.status) {
            return;
        }
        if (stderr_tty_) {
            const auto now = steady::now();
            if (status_shown_ && now - last_status_ < tty_status_every) {
                return;
            }
            status_shown_ = true;
            last_status_ = now;
            std::cerr << "\r" << serving_status_line(s_, host_.sim()) << "\x1b[K" << std::flush;
            return;
        }
        const auto hour = static_cast<std::int64_t>(std::floor(t / 3600.0));
        if (hour > last_hour_) {
            last_hour_ = hour;
            std::cerr << serving_status_line(s_, host_.sim()) << "\n" << std::flush;
        }
    }

    void log_line(const std::string& text) {
        std::cerr << (o_.status && stderr_tty_ ? "\r\x1b[K" : "") << "flocsim: " << text << "\n"
                  << std::flush;
        status_shown_ = false;
    }

    void stop(int code) {
        if (stopping_) {
            return;
        }
        stopping_ = true;
        exit_code_ = code;
        clock_timer_.cancel();
        idle_timer_.cancel();
        rebind_timer_.cancel();
        signals_.cancel();
        if (reader_) {
            reader_->stop();
        }
        if (lab_writer_) {
            lab_writer_->stop();
        }
        if (server_) {
            server_->stop();
        }
    }

    asio::io_context& io_;
    const sim::scenario& s_;
    const serve_options& o_;
    sim::plc_host host_;
    sim::plc_space space_;
    modbus::server_options server_options_;
    std::unique_ptr<modbus::server> server_;
    std::uint16_t port_ = 0;
    std::map<std::uint32_t, modbus::client_record>
        past_clients_; // of servers closed by link losses
    asio::signal_set& signals_;
    asio::steady_timer clock_timer_;
    asio::steady_timer idle_timer_;
    asio::steady_timer rebind_timer_;
    steady::time_point wall_start_;
    std::uint64_t pending_steps_ = 0;
    bool link_down_ = false;
    bool time_read_since_idle_ = false;  // --lockstep: a plant-time read within the last idle tick
    std::vector<std::size_t> active_faults_;
    std::ofstream trend_;
    double next_row_s_ = 0.0;
    // The operator stand-in.
    std::optional<config::plant_config> hmi_cfg_;
    registers::register_map hmi_map_;
    std::unique_ptr<sim::operator_standin> op_;
    std::unique_ptr<sim::modbus_reader> reader_;
    std::vector<sim::register_read> reads_;
    std::unique_ptr<sim::lab_technician> lab_; // --enter-lab
    std::unique_ptr<sim::modbus_lab_writer> lab_writer_;
    bool hmi_connected_ = false;
    std::string hmi_error_;
    bool table_shown_ = false;
    steady::time_point last_table_;
    // Output.
    bool stderr_tty_ = false;
    bool stdout_tty_ = false;
    bool status_shown_ = false;
    steady::time_point last_status_;
    std::int64_t last_hour_ = -1;
    bool stopping_ = false;
    int exit_code_ = exit_ok;
};

} // namespace

bool is_ipv4(const std::string& address) {
    boost::system::error_code ec;
    (void)asio::ip::make_address_v4(address, ec);
    return !ec;
}

bool is_loopback(const std::string& address) {
    boost::system::error_code ec;
    const asio::ip::address_v4 a = asio::ip::make_address_v4(address, ec);
    return !ec && a.is_loopback();
}

int serve(const serve_options& o, const sim::scenario& s) {
    std::optional<config::plant_config> hmi_cfg;
    if (!o.hmi_address.empty()) {
        config::load_result r = config::load_file(o.hmi_config);
        if (r.unreadable) {
            std::cerr << "flocsim: " << o.hmi_config
                      << ": cannot open the flocd config (--hmi-config)\n";
            return exit_no_input;
        }
        if (!r.ok()) {
            for (const auto& e : r.errors) {
                std::cerr << e.message() << "\n";
            }
            std::cerr << "flocsim: " << o.hmi_config
                      << ": the flocd config is invalid (--hmi-config)\n";
            return exit_config;
        }
        hmi_cfg = std::move(r.config);
        if (o.enter_lab) {
            if (s.lab_sheet.entries.empty()) {
                std::cerr << "flocsim: --enter-lab: the scenario " << s.source_file
                          << " has no [lab_sheet] to type in\n";
                return exit_usage;
            }
            const std::vector<std::string> problems =
                sim::lab_sheet_problems(s.lab_sheet, *hmi_cfg);
            for (const std::string& p : problems) {
                std::cerr << p << "\n";
            }
            if (!problems.empty()) {
                std::cerr << "flocsim: the lab sheet of " << s.lab_sheet.source_file
                          << " does not fit the flocd config " << o.hmi_config
                          << " (--hmi-config)\n";
                return exit_config;
            }
        }
    }
    asio::io_context io;
    asio::signal_set signals{io, SIGINT, SIGTERM};
    sim::steady_state_result steady;
    std::vector<double> x0 = sim::initial_state(s, &steady);
    if (s.initial == sim::initial_mode::steady && !steady.converged) {
        std::cerr << "flocsim: the steady state was not reached (residual " << steady.residual
                  << " 1/d after " << steady.days << " plant days)"
                  << (steady.error.empty() ? "" : ": " + steady.error) << "\n";
        return exit_software;
    }
    plant_server p{io, signals, s, o, std::move(x0), std::move(hmi_cfg)};
    if (const int code = p.start(); code != exit_ok) {
        return code;
    }
    io.run();
    return p.finish();
}

} // namespace floc::app
