#include "stepgate/analysis/reference.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>

namespace stepgate {

double lre(double estimate, double certified, double max_digits) {
  if (!std::isfinite(estimate)) return 0.0;
  const double err = std::abs(estimate - certified);
  if (err == 0.0) return max_digits;
  const double value = certified != 0.0 ? -std::log10(err / std::abs(certified)) : -std::log10(err);
  return std::clamp(value, 0.0, max_digits);
}

ReferenceComparison compare_with_reference(const Problem& problem, const FeatureMap& map,
                                           const Vec& params, const ReferenceValues& ref) {
  const auto layout = problem.linear_layout();
  if (!layout) throw std::invalid_argument("reference values need a linear model");
  const Index d = layout->features, c = layout->outputs, rows = d + (layout->intercept ? 1 : 0);
  if (params.size() != rows * c || ref.values.size() != params.size() || map.size() != d)
    throw std::invalid_argument("reference values, parameters and scaling differ in size");
  const Eigen::Map<const Mat> P(params.data(), rows, c);
  Mat w = P.topRows(d);
  Vec b = layout->intercept ? Vec(P.row(d).transpose()) : Vec::Zero(c);
  map_back_linear(map, w, b);
  ReferenceComparison out;
  out.source = ref.source;
  out.estimate.resize(params.size());
  Eigen::Map<Mat> E(out.estimate.data(), rows, c);
  E.topRows(d) = w;
  if (layout->intercept) E.row(d) = b.transpose();
  out.lre.resize(params.size());
  for (Index i = 0; i < params.size(); ++i) out.lre[i] = lre(out.estimate[i], ref.values[i], ref.digits);
  out.min_lre = *std::min_element(out.lre.begin(), out.lre.end());
  return out;
}

}  // namespace stepgate
