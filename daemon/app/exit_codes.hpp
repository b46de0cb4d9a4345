// Process exit codes of flocd and flocsim, after BSD sysexits(3). Documented in README.md.
#pragma once

namespace floc::app {

inline constexpr int exit_ok = 0;           // success; with --check-config: the file is valid
inline constexpr int exit_usage = 64;       // EX_USAGE: bad command line
inline constexpr int exit_data = 65;        // EX_DATAERR: bad input data (e.g. a bad calc value)
inline constexpr int exit_no_input = 66;    // EX_NOINPUT: a file could not be opened or read
inline constexpr int exit_unavailable = 69; // EX_UNAVAILABLE: a needed service is unavailable
inline constexpr int exit_software = 70;    // EX_SOFTWARE: internal error (a bug)
inline constexpr int exit_os_error = 71;    // EX_OSERR: e.g. a socket could not be bound
inline constexpr int exit_cant_create = 73; // EX_CANTCREAT: an output file could not be written
inline constexpr int exit_io_error = 74;    // EX_IOERR: an I/O error while running
inline constexpr int exit_config = 78;      // EX_CONFIG: the config file is invalid

} // namespace floc::app
