#include "floc/sim/lab_writer.hpp"

#include "client_link.hpp"

#include "floc/modbus/protocol.hpp"

#include <algorithm>

namespace floc::sim {

namespace asio = boost::asio;

struct modbus_lab_writer::impl : std::enable_shared_from_this<impl> {
    impl(asio::io_context& io, const reader_options& o)
        : link_(std::make_shared<detail::client_link>(
              io, detail::link_options{o.address, o.port, o.unit_id, o.timeout})) {}

    bool run(std::vector<register_job> jobs, std::function<void(std::vector<job_outcome>)> done) {
        if (busy_) {
            return false;
        }
        busy_ = true;
        jobs_ = std::move(jobs);
        done_ = std::move(done);
        outcomes_.assign(jobs_.size(), job_outcome{});
        job_ = 0;
        write_ = 0;
        if (jobs_.empty()) {
            end();
            return true;
        }
        link_->connect([self = shared_from_this()](const std::string& error) {
            if (!error.empty()) {
                self->fail(error);
                return;
            }
            self->next();
        });
        return true;
    }

    // The next request: the current job's next write, else its read-back, else the next job.
    void next() {
        if (job_ == jobs_.size()) {
            link_->close();
            end();
            return;
        }
        const register_job& j = jobs_[job_];
        const bool refused =
            std::any_of(outcomes_[job_].exceptions.begin(), outcomes_[job_].exceptions.end(),
                        [](std::uint8_t e) { return e != 0; });
        if (write_ < j.writes.size() && !refused) {
            send_write(j.writes[write_]);
        } else {
            send_read(j.read_back);
        }
    }

    void send_write(const register_write& w) {
        const auto n = static_cast<std::uint16_t>(std::min<std::size_t>(w.values.size(), 123));
        std::vector<std::uint8_t> pdu{16,
                                      static_cast<std::uint8_t>(w.address >> 8U),
                                      static_cast<std::uint8_t>(w.address & 0xFFU),
                                      static_cast<std::uint8_t>(n >> 8U),
                                      static_cast<std::uint8_t>(n & 0xFFU),
                                      static_cast<std::uint8_t>(2U * n)};
        for (std::size_t i = 0; i < n; ++i) {
            pdu.push_back(static_cast<std::uint8_t>(w.values[i] >> 8U));
            pdu.push_back(static_cast<std::uint8_t>(w.values[i] & 0xFFU));
        }
        const std::string what = "function 16 at " + std::to_string(w.address);
        link_->request(pdu, what,
                       [self = shared_from_this(), what, address = w.address,
                        n](const std::string& error, std::span<const std::uint8_t> reply) {
                           self->on_write(error, reply, what, address, n);
                       });
    }

    void on_write(const std::string& error, std::span<const std::uint8_t> reply,
                  const std::string& what, std::uint16_t address, std::uint16_t n) {
        if (!error.empty()) {
            fail(error);
            return;
        }
        const std::uint8_t exception = detail::exception_in(reply, 16);
        if (exception == 0 &&
            (reply.size() != 5 || reply[0] != 16 || ((reply[1] << 8U) | reply[2]) != address ||
             ((reply[3] << 8U) | reply[4]) != n)) {
            fail("a reply that does not fit " + what);
            return;
        }
        outcomes_[job_].exceptions.push_back(exception);
        ++write_;
        next();
    }

    void send_read(const register_read& r) {
        const std::string what = "function 3 at " + std::to_string(r.address);
        link_->request(detail::read_pdu(3, r.address, r.count), what,
                       [self = shared_from_this(), what, count = r.count](
                           const std::string& error, std::span<const std::uint8_t> reply) {
                           self->on_read(error, reply, what, count);
                       });
    }

    void on_read(const std::string& error, std::span<const std::uint8_t> reply,
                 const std::string& what, std::uint16_t count) {
        if (!error.empty()) {
            fail(error);
            return;
        }
        job_outcome& o = outcomes_[job_];
        o.read_exception = detail::exception_in(reply, 3);
        if (o.read_exception == 0) {
            std::optional<std::vector<std::uint16_t>> words =
                detail::read_reply_words(reply, 3, count);
            if (!words) {
                fail("a reply that does not fit " + what);
                return;
            }
            o.words = std::move(*words);
        }
        o.reached = true;
        ++job_;
        write_ = 0;
        next();
    }

    // The batch ends at the failure: this job and the later ones are not reached.
    void fail(const std::string& why) {
        link_->close();
        for (std::size_t j = job_; j < outcomes_.size(); ++j) {
            outcomes_[j].reached = false;
            outcomes_[j].error = why;
        }
        end();
    }

    // Hands the outcomes over; `done` may start the next batch.
    void end() {
        busy_ = false;
        auto done = std::move(done_);
        done_ = nullptr;
        std::vector<job_outcome> outcomes = std::move(outcomes_);
        outcomes_.clear();
        jobs_.clear();
        if (done && !stopped_) {
            done(std::move(outcomes));
        }
    }

    void stop() {
        stopped_ = true;
        done_ = nullptr;
        busy_ = false;
        link_->close();
    }

    std::shared_ptr<detail::client_link> link_;
    std::vector<register_job> jobs_;
    std::vector<job_outcome> outcomes_;
    std::function<void(std::vector<job_outcome>)> done_;
    std::size_t job_ = 0;
    std::size_t write_ = 0;
    bool busy_ = false;
    bool stopped_ = false;
};

modbus_lab_writer::modbus_lab_writer(asio::io_context& io, reader_options options)
    : impl_(std::make_shared<impl>(io, options)) {}

modbus_lab_writer::~modbus_lab_writer() {
    impl_->stop();
}

bool modbus_lab_writer::run(std::vector<register_job> jobs,
                            std::function<void(std::vector<job_outcome>)> done) {
    return !impl_->stopped_ && impl_->run(std::move(jobs), std::move(done));
}

bool modbus_lab_writer::busy() const {
    return impl_->busy_;
}

void modbus_lab_writer::stop() {
    impl_->stop();
}

std::uint64_t modbus_lab_writer::requests_sent() const {
    return impl_->link_->requests_sent();
}

} // namespace floc::sim
