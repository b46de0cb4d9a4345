// The simulated PLC behind flocsim's Modbus/TCP server: the simulation, the register image the
// server answers from (refreshed after every advance), the bench operator's writes to the PLC
// set points, and the scenario's protocol-fault schedule turned into the server library's fault
// rules. No sockets, clocks or threads: the serving loop (sim_plant/app/serve.cpp) drives it.
#pragma once

#include "floc/modbus/faults.hpp"
#include "floc/modbus/register_space.hpp"
#include "floc/sim/registers.hpp"
#include "floc/sim/scenario.hpp"
#include "floc/sim/simulation.hpp"

#include <cstdint>
#include <functional>
#include <span>
#include <string>
#include <vector>

namespace floc::sim {

class plc_host {
public:
    // `s` must outlive the host; the simulation starts from `x0` at plant time 0.
    plc_host(const scenario& s, std::vector<double> x0);
    plc_host(const plc_host&) = delete;
    plc_host& operator=(const plc_host&) = delete;

    // Runs the plant on to plant time `t_s` and refreshes the image. False when the solver
    // failed (sim().error() says why); the plant then stays where it was.
    bool advance_to(double t_s);
    // A bench write of holding registers (functions 06, 16, 22, 23): all or nothing. Values
    // outside an entry's limits are clamped to them; a non-number is refused with exception 04
    // (server device failure); a read-only, unmapped or half-covered register with 02.
    [[nodiscard]] modbus::refusal write_holding(std::uint16_t first,
                                                std::span<const std::uint16_t> words);
    // New PLC controls (from the operator stand-in); the image follows.
    void set_controls(const plant_controls& u);

    [[nodiscard]] double time_s() const { return sim_.time_s(); }
    [[nodiscard]] const simulation& sim() const { return sim_; }
    [[nodiscard]] const register_image& image() const { return image_; }
    [[nodiscard]] const scenario& spec() const { return scenario_; }
    // What the last bench write did, for the log ("a_oxic1.do_setpoint written", ...).
    [[nodiscard]] const std::string& last_write() const { return last_write_; }

private:
    void refresh();

    const scenario& scenario_;
    simulation sim_;
    register_image image_;
    std::string last_write_;
};

// The register space the server answers from: reads from the host's image (unmapped addresses:
// exception 02), holding-register writes through plc_host::write_holding, coil writes refused
// with 02 (no coil of the simulated PLC is writable).
class plc_space final : public modbus::register_space {
public:
    struct hooks {
        std::function<void()> before_access;   // called first on every read and write
        std::function<void()> plant_time_read; // a read touched the plant-time registers
        // a bench write was answered (accepted, or refused with the exception in `r`)
        std::function<void(const modbus::client_info& client, modbus::refusal r)> written;
    };

    plc_space(plc_host& host, hooks h);
    plc_space(const plc_space&) = delete;
    plc_space& operator=(const plc_space&) = delete;

    [[nodiscard]] modbus::refusal read_bits(modbus::table from, std::uint16_t address,
                                            std::span<std::uint8_t> out,
                                            const modbus::client_info& client) override;
    [[nodiscard]] modbus::refusal read_registers(modbus::table from, std::uint16_t address,
                                                 std::span<std::uint16_t> out,
                                                 const modbus::client_info& client) override;
    [[nodiscard]] modbus::refusal write_coils(std::uint16_t address,
                                              std::span<const std::uint8_t> values,
                                              const modbus::client_info& client) override;
    [[nodiscard]] modbus::refusal write_registers(std::uint16_t address,
                                                  std::span<const std::uint16_t> values,
                                                  const modbus::client_info& client) override;

private:
    modbus::refusal read(modbus::table from, std::uint16_t address, std::size_t count,
                         const std::function<void(std::size_t, std::uint16_t)>& put);

    plc_host& host_;
    hooks hooks_;
};

// The server library's fault rules for the protocol faults `active` (indices into `events`, as
// protocol_faults_at returns them). Link loss is not a rule: the serving loop closes the server.
[[nodiscard]] std::vector<modbus::fault_rule> fault_rules(const std::vector<plant_event>& events,
                                                          const std::vector<std::size_t>& active);

} // namespace floc::sim
