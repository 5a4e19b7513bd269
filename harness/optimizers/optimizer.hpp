// Optimizers on batched lanes: the parameters of K runs are the columns of one p x K matrix,
// each lane with its own rate. Published methods keep their published update rules.
#pragma once
#include <memory>
#include <optional>
#include <span>
#include <string>
#include <string_view>

#include "stepgate/core/types.hpp"
#include "stepgate/core/optimizer_spec.hpp"

namespace stepgate {

/// The update rule of one optimizer over K lanes. Not thread-safe; one per batch of runs.
///
/// Protocol per iteration t = 0, 1, ...: the caller evaluates the gradient G at the current
/// matrix P (the point at which this optimizer wants its gradient), then calls step(P, G, rates)
/// with rates(k) = base_rate(k) · schedule multiplier at t. For nesterov, P is the look-ahead
/// point (Bengio, Boulanger-Lewandowski & Pascanu 2013 form), so one gradient per iteration
/// suffices and the recorded cost is the cost at the look-ahead point.
class Optimizer {
 public:
  virtual ~Optimizer() = default;
  /// Sets the state for K lanes of p parameters to the start (zero momentum and moments, t = 0).
  virtual void reset(Index p, Index lanes) = 0;
  /// One update of every lane, in place. P and G are p x K, rates has K entries; throws
  /// std::invalid_argument on other shapes (also before the first reset). Allocates nothing.
  virtual void step(Mat& P, const Mat& G, const Vec& rates) = 0;
  /// Keeps only the given lanes (strictly increasing indices into the current lanes), in order.
  /// Throws std::invalid_argument for indices that are out of range or not increasing.
  virtual void keep_lanes(std::span<const Index> keep) = 0;
  /// Appends copies of the given lanes (any indices into the current lanes, repeats allowed) at
  /// the end, with their whole state: a copy then continues exactly as its original would.
  /// Used for the confirmation probe of a run. Throws std::invalid_argument for bad indices.
  virtual void append_lanes(std::span<const Index> from) = 0;
};

/// Throws std::invalid_argument when a setting is out of range (e.g. beta >= 1, sgd without batch).
std::unique_ptr<Optimizer> make_optimizer(const OptimizerSpec& spec);


}  // namespace stepgate
