// Comparison of a solution with published reference values, in the log relative error (LRE) of
// McCullough (1998), "Assessing the reliability of statistical software: Part I", The American
// Statistician 52(4), the convention NIST StRD results are read with.
#pragma once
#include <string>
#include <vector>

#include "stepgate/core/feature_map.hpp"
#include "stepgate/core/reference_values.hpp"
#include "stepgate/problems/problem.hpp"

namespace stepgate {

/// LRE = −log10(|x − c| / |c|) for c ≠ 0, −log10(|x − c|) for c = 0 (log absolute error);
/// clamped to [0, max_digits] (an exact match scores max_digits; NaN scores 0).
double lre(double estimate, double certified, double max_digits = 15.0);

struct ReferenceComparison {
  Vec estimate;                    ///< the solution mapped back to original units
  std::vector<double> lre;         ///< per value
  double min_lre = kMissing;
  std::string source;
};

/// Maps `params` (fitted on features scaled by `map`) back to original units and compares them
/// with `ref`. Throws std::invalid_argument when the problem is not a linear model or the sizes
/// do not match.
ReferenceComparison compare_with_reference(const Problem& problem, const FeatureMap& map,
                                           const Vec& params, const ReferenceValues& ref);

}  // namespace stepgate
