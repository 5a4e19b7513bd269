// Made-up runs for report tests (tests/unit/test_html_report.cpp, tests/browser/
// make_sample_report.cpp): a gap that shrinks or grows geometrically, evaluated at even steps.
#pragma once
#include <cmath>
#include <cstdint>
#include <string>

#include "stepgate/core/results.hpp"

namespace stepgate::test {

struct SampleRun {
  double rate = 0.1;
  std::uint64_t rng_seed = 1;
  long seed_index = 0;
  Outcome outcome = Outcome::converged;
  RunRole role = RunRole::grid;
  std::string reason;
  double optimum = 0.0;     ///< J*, so that cost = optimum + gap
  double gap = 1.0;         ///< the gap at iteration 0
  double per_step = 0.9;    ///< the gap's factor per step
  long every = 5;           ///< steps between trace points
  long last = 50;           ///< the last trace point's iteration
  double gap_limit = HUGE_VAL;  ///< the trace stops after a gap above this (a diverged run)
};

/// The run, with its trace; steps and iterations are left to the caller.
inline StoredRun sample_run(const SampleRun& s) {
  StoredRun out;
  out.role = s.role;
  RunRecord& r = out.record;
  r.rate = s.rate;
  r.seed = s.rng_seed;
  r.seed_index = s.seed_index;
  r.outcome = s.outcome;
  r.reason = s.reason;
  double gap = s.gap;
  for (long k = 0; k <= s.last; k += s.every) {
    r.trace.push_back({k, s.optimum + gap, gap, kMissing});
    if (gap > s.gap_limit) break;
    gap *= std::pow(s.per_step, static_cast<double>(s.every));
  }
  return out;
}

}  // namespace stepgate::test
