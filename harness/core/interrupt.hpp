// A request to stop (Ctrl-C, SIGTERM): set by a signal handler, polled between batches and in
// the loops that wait for runs, so that a stop ends the sweep cleanly (the journal is kept).
#pragma once
#include <atomic>

namespace stepgate {

/// Thrown where a stop is noticed. Deliberately not a std::exception: the handlers that turn a
/// case's exceptions into `failed` runs or a case's `error` must let it through.
struct Interrupted {};

namespace detail {
inline std::atomic<bool> g_stop_requested{false};
}

/// Async-signal-safe (a lock-free atomic store).
inline void request_stop() { detail::g_stop_requested.store(true, std::memory_order_relaxed); }
inline bool stop_requested() { return detail::g_stop_requested.load(std::memory_order_relaxed); }
/// Throws Interrupted when a stop was requested.
inline void stop_point() {
  if (stop_requested()) throw Interrupted{};
}

}  // namespace stepgate
