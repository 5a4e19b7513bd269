// The affine map that a scaling applied to the features: x_scaled = (x - shift) / scale, per
// feature. Kept in core so that analysis/ can map a solution back to original units without
// knowing about data/.
#pragma once
#include "stepgate/core/types.hpp"

namespace stepgate {

struct FeatureMap {
  Vec shift;  ///< per feature, in original units (0 = no shift)
  Vec scale;  ///< per feature, original units per scaled unit (1 = no scaling); never 0

  static FeatureMap identity(Index d) { return {Vec::Zero(d), Vec::Ones(d)}; }
  Index size() const { return shift.size(); }
};

/// Maps linear-model weights fitted on scaled features back to original units.
/// `w` holds d weights per output (d x c, column per output) and `b` the c intercepts:
///   w_orig = w / scale (row-wise),   b_orig = b - sum_j w_orig_j * shift_j.
/// Without an intercept in the model, pass b = 0; a non-zero shift then cannot be undone,
/// and the caller must not fit a model without intercept on shifted features.
void map_back_linear(const FeatureMap& map, Mat& w, Vec& b);

}  // namespace stepgate
