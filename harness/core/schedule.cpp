#include "stepgate/core/schedule.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>
#include <vector>

#include <fmt/format.h>

namespace stepgate {

namespace {

/// The schedule without warm-up, at its own clock t >= 0 over `horizon` iterations.
double base_multiplier(const Schedule& s, long t, long horizon) {
  switch (s.kind) {
    case ScheduleKind::constant: return 1.0;
    case ScheduleKind::step: return std::pow(s.factor, static_cast<double>(t / s.every));
    case ScheduleKind::exponential: return std::exp(-s.decay * static_cast<double>(t));
    case ScheduleKind::inverse_time: return 1.0 / (1.0 + s.decay * static_cast<double>(t));
    case ScheduleKind::cosine: {
      const long h = std::max(horizon, 1L);
      const double frac = static_cast<double>(std::min(t, h)) / static_cast<double>(h);
      return s.floor + (1.0 - s.floor) * 0.5 * (1.0 + std::cos(std::numbers::pi * frac));
    }
  }
  return 1.0;
}

}  // namespace

double Schedule::multiplier(long t, long budget) const {
  t = std::max(t, 0L);
  const long horizon = budget - std::max(warmup, 0L);
  if (t < warmup)
    return base_multiplier(*this, 0, horizon) * static_cast<double>(t + 1) /
           static_cast<double>(warmup);
  return base_multiplier(*this, t - std::max(warmup, 0L), horizon);
}

std::string_view to_string(ScheduleKind k) {
  switch (k) {
    case ScheduleKind::constant: return "constant";
    case ScheduleKind::step: return "step";
    case ScheduleKind::exponential: return "exponential";
    case ScheduleKind::inverse_time: return "inverse_time";
    case ScheduleKind::cosine: return "cosine";
  }
  return "constant";
}

std::optional<ScheduleKind> schedule_kind_from_string(std::string_view s) {
  for (ScheduleKind k : {ScheduleKind::constant, ScheduleKind::step, ScheduleKind::exponential,
                         ScheduleKind::inverse_time, ScheduleKind::cosine})
    if (to_string(k) == s) return k;
  return std::nullopt;
}

std::string validate(const Schedule& s) {
  // Comparisons are written so that NaN fails them.
  std::vector<std::string> errors;
  if (!(s.factor > 0.0 && s.factor <= 1.0))
    errors.push_back(fmt::format("factor = {} is outside (0, 1]", s.factor));
  if (s.every < 1) errors.push_back(fmt::format("every = {} must be >= 1", s.every));
  if (!(s.decay >= 0.0 && std::isfinite(s.decay)))
    errors.push_back(fmt::format("decay = {} must be finite and >= 0", s.decay));
  if (!(s.floor >= 0.0 && s.floor <= 1.0))
    errors.push_back(fmt::format("floor = {} is outside [0, 1]", s.floor));
  if (s.warmup < 0) errors.push_back(fmt::format("warmup = {} must be >= 0", s.warmup));
  return fmt::format("{}", fmt::join(errors, "; "));
}

}  // namespace stepgate
