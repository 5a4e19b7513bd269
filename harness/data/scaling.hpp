// Feature scalings applied to a Dataset before training. Each one is an affine map per
// feature, x_scaled = (x − shift) / scale, recorded in Dataset::map (composed with any map
// already there) so that solutions can be mapped back to original units
// (core/feature_map.hpp, map_back_linear). The target y is never touched.
#pragma once
#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "stepgate/core/dataset.hpp"

namespace stepgate {

struct ScalingSpec {
  enum Kind {
    none,         ///< identity
    standardize,  ///< shift = mean, scale = POPULATION sd (divisor n), as sklearn's
                  ///< StandardScaler (with_mean, with_std) does
    minmax,       ///< shift = min, scale = max − min: features in [0, 1] (sklearn MinMaxScaler)
    maxabs,       ///< shift = 0, scale = max |x|: features in [−1, 1] (sklearn MaxAbsScaler)
    units,        ///< x_scaled = x · factor (shift 0, scale 1/factor): a change of units
    jitter,       ///< x_scaled = x · f_j, f_j log-uniform in [1/sqrt(span), sqrt(span)]
  } kind = none;
  double factor = 10.0;              ///< units: multiplier, finite and non-zero
  std::vector<std::string> columns;  ///< units: features to multiply; empty = all
  double span = 100.0;               ///< jitter: ratio of largest to smallest factor, >= 1
  std::uint64_t seed = 0;            ///< jitter: seed of the factors (mt19937_64)
  /// Remove every constant column (min == max) before scaling, whatever the kind. Without it,
  /// a constant column under standardize or minmax, or an all-zero column under maxabs,
  /// is an InputError naming the column.
  bool drop_constant = false;
  std::string name;                  ///< as named in the suite, e.g. "standardize", "units-x1000"
};

/// Lower-case name of a kind ("none", "standardize", ...).
std::string_view to_string(ScalingSpec::Kind kind);
/// Parses a lower-case kind name; nullopt for anything else.
std::optional<ScalingSpec::Kind> scaling_kind_from_string(std::string_view name);

/// Scales data.X in place and updates data.map (and, with drop_constant, data.features).
/// Errors (InputError, `where` = "dataset 'NAME', scaling 'SPEC-NAME'"): constant or
/// all-zero columns as above, unknown columns for units, factor or span out of range, and
/// non-finite values in X.
void apply_scaling(Dataset& data, const ScalingSpec& spec);

}  // namespace stepgate
