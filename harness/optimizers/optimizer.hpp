// Optimizers on batched lanes: the parameters of K runs are the columns of one p x K matrix,
// each lane with its own rate. Published methods keep their published update rules.
#pragma once
#include <memory>
#include <optional>
#include <span>
#include <string>
#include <string_view>

#include "core/types.hpp"
#include "optimizers/schedule.hpp"

namespace stepgate {

enum class OptimizerKind { gd, sgd, momentum, nesterov, adagrad, rmsprop, adam };

/// What an optimizer is, with its published defaults.
struct OptimizerSpec {
  OptimizerKind kind = OptimizerKind::gd;
  std::string label;          ///< the suite's name for it, e.g. "hb-0.9"; "" = kind name
  double beta = 0.9;          ///< momentum / nesterov: momentum coefficient, in [0, 1)
  double beta1 = 0.9;         ///< adam: first-moment decay (Kingma & Ba 2015, Algorithm 1)
  double beta2 = 0.999;       ///< adam: second-moment decay (ibid.)
  double rho = 0.9;           ///< rmsprop: decay of the mean square (Tieleman & Hinton 2012)
  double eps = 1e-8;          ///< adam / rmsprop / adagrad: added to the root in the denominator
  long batch_size = 0;        ///< samples per mini-batch; 0 = full batch. sgd requires > 0;
                              ///< other kinds accept it too (mini-batch momentum, adam, ...)
  Schedule schedule;          ///< rate schedule; the searched rate is its base rate

  std::string name() const;   ///< label, or the kind's name when there is no label
};

std::string_view to_string(OptimizerKind k);
/// Parses the lower-case name (as printed by to_string); nullopt for anything else.
std::optional<OptimizerKind> optimizer_kind_from_string(std::string_view s);

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
};

/// Throws std::invalid_argument when a setting is out of range (e.g. beta >= 1, sgd without batch).
std::unique_ptr<Optimizer> make_optimizer(const OptimizerSpec& spec);

/// Checks the spec; returns an empty string when valid, otherwise what is wrong (every problem,
/// separated by "; "). Every field is checked whatever the kind, so that a suite cannot carry
/// an out-of-range value that would silently matter after a change of kind.
std::string validate(const OptimizerSpec& spec);

}  // namespace stepgate
