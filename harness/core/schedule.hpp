// Rate schedules. The searched rate is the schedule's base (peak) rate α; the rate used at
// iteration t (0-based) is α · multiplier(t, budget).
#pragma once
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "stepgate/core/range.hpp"

namespace stepgate {

enum class ScheduleKind {
  constant,      ///< 1
  step,          ///< factor^floor(t / every)
  exponential,   ///< exp(−decay · t)
  inverse_time,  ///< 1 / (1 + decay · t)
  cosine,        ///< floor + (1 − floor) · ½ (1 + cos(π t / budget))
};

struct Schedule {
  ScheduleKind kind = ScheduleKind::constant;
  double factor = 0.5;  ///< step: multiplier per drop, in (0, 1]
  long every = 1000;    ///< step: iterations between drops, >= 1
  double decay = 1e-3;  ///< exponential / inverse_time: per-iteration decay, >= 0
  double floor = 0.0;   ///< cosine: final multiplier, in [0, 1]
  long warmup = 0;      ///< linear warm-up: over the first `warmup` iterations the multiplier is
                        ///< scaled by (t + 1) / warmup; the schedule's own clock starts after it

  /// Multiplier at iteration t of a run with the given budget (iterations), in (0, 1].
  /// t < warmup: base(0) · (t + 1) / warmup; afterwards base(t − warmup), where cosine's
  /// horizon is budget − warmup (at least 1) and t past the horizon stays at `floor`.
  /// A negative t counts as 0.
  double multiplier(long t, long budget) const;
};

/// One parameter of Schedule, declared once: key, member (a number or a count), range, and the
/// kinds that use it (warmup: every kind). Suite reader, results and validate() read this table.
struct ScheduleParam {
  std::string_view key;
  double Schedule::*number = nullptr;  ///< one of number and count is set
  long Schedule::*count = nullptr;
  Range range;                      ///< whole for the counts
  std::vector<ScheduleKind> kinds;  ///< empty: every kind
  bool used_by(ScheduleKind k) const;
};
/// factor, every, decay, floor, warmup.
const std::vector<ScheduleParam>& schedule_params();
/// Every kind, in the order of the enum, and their names.
const std::vector<ScheduleKind>& schedule_kinds();
const std::vector<std::string>& schedule_kind_names();

std::string_view to_string(ScheduleKind k);
/// Parses the lower-case name (as printed by to_string); nullopt for anything else.
std::optional<ScheduleKind> schedule_kind_from_string(std::string_view s);

/// Checks the ranges documented above; returns an empty string when valid, otherwise what is
/// wrong (every problem, separated by "; ").
std::string validate(const Schedule& s);

}  // namespace stepgate
