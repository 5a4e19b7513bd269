#include "stepgate/core/schedule.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>
#include <vector>

#include <fmt/format.h>

#include "stepgate/core/names.hpp"

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

const std::vector<ScheduleKind>& schedule_kinds() {
  using K = ScheduleKind;
  static const std::vector<K> kinds = {K::constant, K::step, K::exponential, K::inverse_time, K::cosine};
  return kinds;
}

const std::vector<std::string>& schedule_kind_names() {
  static const std::vector<std::string> names = names_of(schedule_kinds());
  return names;
}

std::optional<ScheduleKind> schedule_kind_from_string(std::string_view s) { return value_named(schedule_kinds(), s); }

const std::vector<ScheduleParam>& schedule_params() {
  using K = ScheduleKind;
  using S = Schedule;
  static const std::vector<ScheduleParam> params = {
      {"factor", &S::factor, nullptr, Range::open_closed(0, 1), {K::step}},
      {"every", nullptr, &S::every, Range::count_at_least(1), {K::step}},
      {"decay", &S::decay, nullptr, Range::at_least(0), {K::exponential, K::inverse_time}},
      {"floor", &S::floor, nullptr, Range::closed(0, 1), {K::cosine}},
      {"warmup", nullptr, &S::warmup, Range::count_at_least(0), {}},
  };
  return params;
}

bool ScheduleParam::used_by(ScheduleKind k) const {
  return kinds.empty() || std::find(kinds.begin(), kinds.end(), k) != kinds.end();
}

std::string validate(const Schedule& s) {
  std::vector<std::string> errors;
  for (const ScheduleParam& p : schedule_params()) {
    const double v = p.number ? s.*p.number : static_cast<double>(s.*p.count);
    if (!p.range.admits(v))
      errors.push_back(p.number ? fmt::format("{} = {}, expected {}", p.key, v, p.range.expected())
                                : fmt::format("{} = {}, expected {}", p.key, s.*p.count, p.range.expected()));
  }
  return fmt::format("{}", fmt::join(errors, "; "));
}

}  // namespace stepgate
