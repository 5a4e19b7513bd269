// Narrowing a bracket around a boundary in the rate axis (edge, floor or blow-up) by k-ary
// section in log space: each round runs `lanes` rates spaced evenly in log between the bracket's
// ends, as one batch, so the log-width shrinks by a factor lanes + 1 per round.
#pragma once
#include <functional>
#include <span>
#include <vector>

namespace stepgate {

struct SectionOptions {
  double precision = 0.01;  ///< stop when hi / lo <= 1 + precision (> 0); default 1%
  int lanes = 3;            ///< rates per round (>= 1); 1 is plain bisection in log space.
                            ///< 3 reaches 1% from a 3-per-decade grid step in 4 rounds (12 runs)
  int max_rounds = 60;      ///< safety stop
};

struct Bracket {
  double lo = 0.0;  ///< a rate on the lower side of the boundary (is_lower true)
  double hi = 0.0;  ///< a rate on the upper side
  int rounds = 0;
  int runs = 0;
  double ratio() const { return hi / lo; }
};

/// Given lo with is_lower(lo) and hi with !is_lower(hi), narrows [lo, hi]. `is_lower` receives
/// the rates of one round (increasing) and returns one answer per rate. When answers are not
/// monotone, the new hi is the lowest rate answered false, and lo the highest rate below it
/// answered true (or the old lo), so the bracket always holds a true/false pair.
Bracket narrow_bracket(double lo, double hi, const SectionOptions& opt,
                       const std::function<std::vector<bool>(std::span<const double>)>& is_lower);

}  // namespace stepgate
