// The Boost.Asio headers that code running a floc::modbus::server's io_context needs (flocd,
// flocsim, the tests), included with the two workarounds Boost 1.74 needs under GCC 12.
#pragma once

// Boost 1.74's headers use std::exchange without including <utility>; GCC 12 in C++20 mode
// needs it included first.
#include <utility>

// GCC 12 at -O2 reports a "potential null pointer dereference" inside Asio's scheduler
// (scheduler::compensating_work_started, inlined into the epoll reactor), where the pointer is
// never null on a thread that runs the io_context. The report is silenced for Asio's code only.
#pragma GCC diagnostic push
#pragma GCC diagnostic ignored "-Wnull-dereference"
#include <boost/asio/io_context.hpp>
#include <boost/asio/ip/address_v4.hpp>
#include <boost/asio/ip/tcp.hpp>
#include <boost/asio/posix/stream_descriptor.hpp>
#include <boost/asio/post.hpp>
#include <boost/asio/signal_set.hpp>
#include <boost/asio/steady_timer.hpp>
#include <boost/asio/write.hpp>
#pragma GCC diagnostic pop
