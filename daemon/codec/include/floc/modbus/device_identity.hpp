// The objects a server returns to read device identification (FC 43 / MEI 14, AppSpec V1.1b3
// §6.21). Basic objects are mandatory; the regular ones are sent when not empty.
#pragma once

#include <cstddef>
#include <cstdint>
#include <optional>
#include <string>

namespace floc::modbus {

// Longest object value: an object with its id and length byte must fit in one response PDU.
inline constexpr std::size_t max_identity_object_size = 244;

struct device_identity {
    std::string vendor_name = "floc project"; // object 0x00 (basic)
    std::string product_code = "FLOC";        // object 0x01 (basic)
    std::string revision = "0.1";             // object 0x02, major.minor revision (basic)
    std::string vendor_url;                   // object 0x03 (regular, optional)
    std::string product_name;                 // object 0x04 (regular, optional)
    std::string model_name;                   // object 0x05 (regular, optional)
    std::string application_name;             // object 0x06, user application name (regular)
};

// Why `identity` cannot be served (an empty basic object, an object over 244 bytes), or nothing.
[[nodiscard]] std::optional<std::string> identity_error(const device_identity& identity);

} // namespace floc::modbus
