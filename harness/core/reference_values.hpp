// Published values of a linear model's parameters (e.g. NIST StRD certified coefficients).
#pragma once
#include <string>
#include <vector>

#include "stepgate/core/types.hpp"

namespace stepgate {

/// In LinearLayout order (per output: the feature weights, then the intercept if the model has
/// one), in ORIGINAL feature units.
struct ReferenceValues {
  std::string source;              ///< e.g. "NIST StRD Longley, certified values"
  std::vector<std::string> names;  ///< one per value, for reports
  Vec values;
  double digits = 15.0;            ///< significant digits of the published values (LRE cap)
};

}  // namespace stepgate
