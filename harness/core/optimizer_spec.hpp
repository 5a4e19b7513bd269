// What an optimizer is: a plain value a suite describes and optimizers/ executes. Kept in core
// so that suite/ can build it and run/ can hand it on without knowing each other.
#pragma once
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "stepgate/core/range.hpp"
#include "stepgate/core/schedule.hpp"

namespace stepgate {

enum class OptimizerKind { gd, sgd, momentum, nesterov, adagrad, rmsprop, adam };

/// How a mini-batch optimizer draws its batches of `batch_size` rows from the n samples. Every
/// draw comes from the run's seed.
enum class BatchSampling {
  epochs,       ///< each epoch a fresh permutation cut into consecutive batches (the last may be
                ///< smaller); batches of one epoch are disjoint, so steps are not independent.
                ///< The default, as most training loops do.
  independent,  ///< each step b distinct rows drawn uniformly, independently of earlier steps
                ///< (without replacement within the batch): the sampling for which the
                ///< mean-square stability limit holds, with c_b = (n − b)/(b(n − 1))
  replacement,  ///< each step b rows drawn uniformly with replacement (repeats possible),
                ///< independently of earlier steps: c_b = 1/b
};

/// What an optimizer is, with its published defaults.
struct OptimizerSpec {
  OptimizerKind kind = OptimizerKind::gd;
  std::string label;          ///< the suite's name for it, e.g. "hb-0.9"; "" = kind name
  double beta = 0.9;          ///< momentum / nesterov: momentum coefficient, in [0, 1)
  double beta1 = 0.9;         ///< adam: first-moment decay (Kingma & Ba 2015, Algorithm 1)
  double beta2 = 0.999;       ///< adam: second-moment decay (ibid.)
  double rho = 0.9;           ///< rmsprop: decay of the mean square (Goodfellow et al. 2016, Alg. 8.5)
  double eps = 1e-8;          ///< adam / rmsprop / adagrad: added to the root in the denominator
  long batch_size = 0;        ///< samples per mini-batch; 0 = full batch. sgd requires > 0;
                              ///< other kinds accept it too (mini-batch momentum, adam, ...)
  BatchSampling sampling = BatchSampling::epochs;  ///< how batches are drawn (batch_size > 0 only)
  Schedule schedule;          ///< rate schedule; the searched rate is its base rate

  std::string name() const;   ///< label, or the kind's name when there is no label
};

/// One numeric parameter of OptimizerSpec, declared once: its key (in suites and results), its
/// member, its range, and the kinds that use it. The suite reader, the results writer and
/// reader, and validate() all read this table; a new parameter is one more row.
struct OptimizerParam {
  std::string_view key;
  double OptimizerSpec::*member;
  Range range;
  std::vector<OptimizerKind> kinds;  ///< the kinds that use it (others ignore it)
  bool used_by(OptimizerKind k) const;
};
/// beta, beta1, beta2, rho, eps (batch_size and schedule apply to every kind).
const std::vector<OptimizerParam>& optimizer_params();
/// Every kind, in the order of the enum.
const std::vector<OptimizerKind>& optimizer_kinds();
/// Their names: "gd", "sgd", ...
const std::vector<std::string>& optimizer_kind_names();

/// Every sampling, in the order of the enum, and their names: "epochs", "independent", "replacement".
const std::vector<BatchSampling>& batch_samplings();
const std::vector<std::string>& batch_sampling_names();
std::string_view to_string(BatchSampling s);
std::optional<BatchSampling> batch_sampling_from_string(std::string_view s);

std::string_view to_string(OptimizerKind k);
/// Parses the lower-case name (as printed by to_string); nullopt for anything else.
std::optional<OptimizerKind> optimizer_kind_from_string(std::string_view s);

/// Checks the spec; returns an empty string when valid, otherwise what is wrong (every problem,
/// separated by "; "). Every field is checked whatever the kind, so that a suite cannot carry
/// an out-of-range value that would silently matter after a change of kind.
std::string validate(const OptimizerSpec& spec);

}  // namespace stepgate
