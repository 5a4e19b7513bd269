#include "stepgate/data/column_stats.hpp"

#include <cmath>

namespace stepgate {

std::vector<ColumnStats> column_stats(const Dataset& data) {
  std::vector<ColumnStats> stats;
  const Index n = data.X.rows();
  stats.reserve(static_cast<std::size_t>(data.X.cols()));
  for (Index j = 0; j < data.X.cols(); ++j) {
    const auto column = data.X.col(j);
    const double mean = n > 0 ? column.mean() : kMissing;
    const double sd = n > 0 ? std::sqrt((column.array() - mean).square().sum() / double(n))
                            : kMissing;
    const auto k = static_cast<std::size_t>(j);
    stats.push_back({k < data.features.size() ? data.features[k] : "", mean, sd});
  }
  return stats;
}

}  // namespace stepgate
