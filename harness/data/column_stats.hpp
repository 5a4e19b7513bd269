// Per-feature mean and standard deviation, for reports and for checking scalings.
#pragma once
#include <string>
#include <vector>

#include "stepgate/core/dataset.hpp"

namespace stepgate {

struct ColumnStats {
  std::string name;  ///< feature name
  double mean;       ///< arithmetic mean over the rows
  /// POPULATION standard deviation (divisor n), the one `standardize` divides by (as
  /// scikit-learn's StandardScaler does); NaN (kMissing) when n < 1.
  double sd;
};

/// One entry per feature of data.X, in column order (two-pass: mean, then squared deviations).
std::vector<ColumnStats> column_stats(const Dataset& data);

}  // namespace stepgate
