#include "floc/modbus/faults.hpp"

#include <algorithm>

namespace floc::modbus {

namespace {

bool matches(const fault_rule& rule, std::uint8_t function, const request_spans& spans) {
    if (rule.function && *rule.function != function) {
        return false;
    }
    if (rule.first_address == 0 && rule.last_address == 0xFFFF) {
        return true;
    }
    for (std::size_t i = 0; i < spans.count; ++i) {
        const address_span& s = spans.spans.at(i);
        const unsigned last = static_cast<unsigned>(s.address) + s.count - 1U;
        if (s.count > 0 && s.address <= rule.last_address && last >= rule.first_address) {
            return true;
        }
    }
    return false;
}

} // namespace

void fault_plan::set(const std::vector<fault_rule>& rules) {
    rules_.clear();
    for (const fault_rule& r : rules) {
        const std::optional<std::uint32_t> left =
            r.times > 0 ? std::optional<std::uint32_t>{r.times} : std::nullopt;
        rules_.push_back(active_rule{r, left});
    }
}

fault_effect fault_plan::apply(std::uint8_t function, const request_spans& spans) {
    fault_effect effect;
    for (active_rule& active : rules_) {
        const fault_rule& rule = active.rule;
        if (!matches(rule, function, spans)) {
            continue;
        }
        switch (rule.kind) {
        case fault_kind::delay_reply:
            effect.delay = std::max(effect.delay, rule.delay);
            break;
        case fault_kind::drop_connection:
            effect.drop = true;
            break;
        case fault_kind::exception_reply:
            if (!effect.exception) {
                effect.exception = rule.exception;
            }
            break;
        case fault_kind::wrong_transaction_id:
            effect.wrong_transaction_id = true;
            break;
        }
        if (active.left) {
            --*active.left;
        }
    }
    std::erase_if(rules_, [](const active_rule& r) { return r.left && *r.left == 0; });
    return effect;
}

} // namespace floc::modbus
