// Service manager notifications (sd_notify protocol: a datagram to $NOTIFY_SOCKET), written
// without libsystemd. Does nothing when flocd does not run under systemd.
#pragma once

#include <string_view>

namespace floc::app {

// Sends e.g. "READY=1", "STOPPING=1", "WATCHDOG=1", "STATUS=...". Returns false when there is
// no notification socket or the send failed.
bool notify_service_manager(std::string_view message);

} // namespace floc::app
