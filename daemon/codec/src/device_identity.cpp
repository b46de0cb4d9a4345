#include "floc/modbus/device_identity.hpp"

#include <array>
#include <string_view>
#include <utility>

namespace floc::modbus {

std::optional<std::string> identity_error(const device_identity& identity) {
    const std::array<std::pair<std::string_view, const std::string*>, 7> objects{{
        {"vendor name", &identity.vendor_name},
        {"product code", &identity.product_code},
        {"revision", &identity.revision},
        {"vendor URL", &identity.vendor_url},
        {"product name", &identity.product_name},
        {"model name", &identity.model_name},
        {"application name", &identity.application_name},
    }};
    for (std::size_t i = 0; i < objects.size(); ++i) {
        const auto& [name, value] = objects.at(i);
        if (i < 3 && value->empty()) {
            return "device identification: the " + std::string{name} +
                   " is empty; expected the text of this mandatory basic object";
        }
        if (value->size() > max_identity_object_size) {
            return "device identification: the " + std::string{name} + " has " +
                   std::to_string(value->size()) + " bytes; expected at most " +
                   std::to_string(max_identity_object_size);
        }
    }
    return std::nullopt;
}

} // namespace floc::modbus
