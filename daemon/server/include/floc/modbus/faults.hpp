// Protocol fault injection: rules that make a server misbehave like a faulty PLC, so that a
// poller can be tested against slow replies, dropped connections, exception replies and wrong
// transaction ids. Off unless rules are set. Pure: the server applies the effects.
#pragma once

#include "floc/modbus/protocol.hpp"
#include "floc/modbus/request.hpp"

#include <chrono>
#include <cstdint>
#include <optional>
#include <vector>

namespace floc::modbus {

enum class fault_kind : std::uint8_t {
    delay_reply,          // send the reply `delay` later (replies stay in request order)
    drop_connection,      // close the connection instead of answering
    exception_reply,      // answer with `exception` instead of doing the request
    wrong_transaction_id, // answer with the request's transaction id + 1
};

// One rule: what to do, and to which requests.
struct fault_rule {
    fault_kind kind = fault_kind::delay_reply;
    std::optional<std::uint8_t> function; // only requests with this function code (any if empty)
    std::uint16_t first_address = 0;      // only requests touching first..last address; with
    std::uint16_t last_address = 0xFFFF;  //   the full range, also requests without addresses
    std::chrono::milliseconds delay{0};   // delay_reply: how much later
    exception_code exception = exception_code::server_device_failure; // exception_reply: the code
    std::uint32_t times = 0; // fire this many times, then retire; 0: no limit
};

// What the matching rules do to one request, combined.
struct fault_effect {
    bool drop = false;
    std::chrono::milliseconds delay{0};      // the longest delay of the matching rules
    std::optional<exception_code> exception; // the first matching exception rule's code
    bool wrong_transaction_id = false;
};

// The active rules of one server.
class fault_plan {
public:
    // Replaces the rules (an empty list switches fault injection off).
    void set(const std::vector<fault_rule>& rules);
    // Number of rules still active.
    [[nodiscard]] std::size_t active() const { return rules_.size(); }
    // The effect on a request with `function` touching `spans` (none for device identification
    // or an unparsable request); rules with a limit count down and retire at zero.
    [[nodiscard]] fault_effect apply(std::uint8_t function, const request_spans& spans);

private:
    struct active_rule {
        fault_rule rule;
        std::optional<std::uint32_t> left; // firings left; none: no limit
    };
    std::vector<active_rule> rules_;
};

} // namespace floc::modbus
