#include "stepgate/search/rate_grid.hpp"

#include <cmath>
#include <stdexcept>

namespace stepgate {

std::vector<double> log_grid(const RateGrid& grid) {
  if (!(grid.from > 0.0) || !(grid.to >= grid.from) || grid.per_decade < 1)
    throw std::invalid_argument("a rate grid needs 0 < from <= to and per_decade >= 1");
  std::vector<double> out;
  // In log space: to/from may overflow a double (1e-160 .. 1e160) while both ends are fine.
  const double low = std::log10(grid.from), decades = std::log10(grid.to) - low;
  const long n = static_cast<long>(std::floor(decades * grid.per_decade + 1e-9));
  for (long i = 0; i <= n; ++i) out.push_back(i == 0 ? grid.from : std::pow(10.0, low + static_cast<double>(i) / grid.per_decade));
  return out;
}

std::vector<double> log_between(double lo, double hi, int count) {
  std::vector<double> out;
  const double a = std::log(lo), step = (std::log(hi) - a) / (count + 1);
  for (int i = 1; i <= count; ++i) out.push_back(std::exp(a + step * i));
  return out;
}

}  // namespace stepgate
