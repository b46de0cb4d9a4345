// The writer of the operator stand-in's lab entries: a short-lived Modbus/TCP client on the
// io_context that, for a batch of jobs, connects to the floc advisory server, sends each job's
// writes (function 16, in order) and reads its registers back (function 03), and closes. A write
// answered with an exception ends its job's writes (the later ones depend on it); the read-back
// still runs, so the job's acknowledgement is seen. Every step is bounded by a timeout; a batch
// that fails ends there and the jobs it did not finish are reported as not reached. It never
// retries by itself and writes nothing but the jobs' registers. The advice reader
// (modbus_reader) stays read-only: this is its own connection. All members are called from the
// io_context's thread.
#pragma once

#include "floc/sim/modbus_reader.hpp"

#include <cstdint>
#include <functional>
#include <memory>
#include <string>
#include <vector>

namespace boost::asio {
class io_context;
} // namespace boost::asio

namespace floc::sim {

// Function 16: `values` from `address` on (1..123 registers).
struct register_write {
    std::uint16_t address = 0;
    std::vector<std::uint16_t> values;
};

struct register_job {
    std::vector<register_write> writes;
    register_read read_back; // function 03
};

struct job_outcome {
    bool reached = false;                 // every request of the job had a reply
    std::string error;                    // why not
    std::vector<std::uint8_t> exceptions; // per write sent: 0 done, else the exception code
    std::uint8_t read_exception = 0;      // the read-back's exception code, 0 when read
    std::vector<std::uint16_t> words;     // the registers read back
};

class modbus_lab_writer {
public:
    // `options`: the server (address, port, unit id) and the timeout of each step; the period
    // and retry of a reader are not used.
    modbus_lab_writer(boost::asio::io_context& io, reader_options options);
    ~modbus_lab_writer(); // stops
    modbus_lab_writer(const modbus_lab_writer&) = delete;
    modbus_lab_writer& operator=(const modbus_lab_writer&) = delete;

    // Runs `jobs` over one connection; `done` gets one outcome per job, in order. One batch at a
    // time: while busy(), a new batch is refused (false).
    bool run(std::vector<register_job> jobs, std::function<void(std::vector<job_outcome>)> done);
    [[nodiscard]] bool busy() const;
    // Closes the connection; `done` is not called.
    void stop();
    [[nodiscard]] std::uint64_t requests_sent() const;

private:
    struct impl;
    std::shared_ptr<impl> impl_;
};

} // namespace floc::sim
