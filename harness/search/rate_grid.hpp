// Log-spaced rate grids.
#pragma once
#include <vector>

#include "stepgate/core/rate_policy.hpp"

namespace stepgate {

/// from · 10^(i/per_decade) for i = 0, 1, ... while <= to (with a relative slack of 1e-9, so
/// that `to` itself is included when it lies on the grid). Each point is computed from i
/// directly, never by repeated multiplication, so the same grid has the same bits everywhere.
std::vector<double> log_grid(const RateGrid& grid);

/// `count` rates spaced evenly in log strictly between lo and hi.
std::vector<double> log_between(double lo, double hi, int count);

}  // namespace stepgate
