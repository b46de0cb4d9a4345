// Plant time: the time the advisors compute on. In production it is the system clock as local
// time of day (so that "07:30" means half past seven at the plant); on a bench it can follow a
// PLC tag holding plant seconds (the simulator's clock), so accelerated runs stay coherent.
// Pure: the daemon passes the readings in.
#pragma once

#include "floc/config/config.hpp"

#include <optional>

namespace floc::app {

class plant_clock {
public:
    explicit plant_clock(config::clock_source source) : source_(source) {}

    // System clock: seconds since the Unix epoch, shifted by the local UTC offset.
    void system_time(double unix_s, double utc_offset_s) {
        if (source_ == config::clock_source::system) {
            now_ = unix_s + utc_offset_s;
        }
    }
    // A new reading of the PLC's time tag (only with source plc_tag). A reading that goes
    // backwards (the simulator restarted) is taken as it is and counted.
    void tag_time(double plant_s) {
        if (source_ != config::clock_source::plc_tag) {
            return;
        }
        if (now_ && plant_s < *now_) {
            ++restarts_;
        }
        now_ = plant_s;
    }

    [[nodiscard]] std::optional<double> now() const { return now_; }
    [[nodiscard]] unsigned restarts() const { return restarts_; }
    [[nodiscard]] config::clock_source source() const { return source_; }

private:
    config::clock_source source_;
    std::optional<double> now_;
    unsigned restarts_ = 0;
};

} // namespace floc::app
