// Executes a batch of runs of one case: the same problem, optimizer and seed at K rates. The
// runs advance together as the K columns of one parameter matrix ("lanes"), so a step costs
// one matrix-matrix product; a lane that is decided (diverged, converged) drops out at once.
#pragma once
#include <cstdint>
#include <span>
#include <vector>

#include "stepgate/analysis/outcome_rules.hpp"
#include "stepgate/core/run_record.hpp"
#include "stepgate/core/run_settings.hpp"
#include "stepgate/optimizers/optimizer.hpp"
#include "stepgate/problems/problem.hpp"

namespace stepgate {

/// Identifies a batch's runs: its seed and which of the case's seeds it is.
struct BatchSeed {
  std::uint64_t seed = 0;  ///< derived from the run's coordinates (case id, seed index)
  long index = 0;
  std::uint64_t number = 0;  ///< the user's seed number (as in the suite): {seed} of commands
};

/// Runs `rates` (any order, each > 0) together. Returns one record per rate, in the given order.
/// Every record's outcome is set; an exception inside the problem makes every unfinished lane
/// `failed` with the message as reason. Bitwise deterministic for given inputs.
///
/// Confirmation: a run whose criterion has held goes on through its confirmation stretch
/// (OutcomeMonitor), and when settings.outcome.probe is set a kicked copy of it (a probe lane)
/// runs beside it along `probe_direction` (a unit vector of dim() entries; nullptr = the top
/// eigenvector of the Hessian at the first run to need it, computed once per batch). Probe
/// lanes are not recorded; only their growth decides.
std::vector<RunRecord> run_batch(const Problem& problem, const OptimizerSpec& spec,
                                 const RunSettings& settings, std::span<const double> rates,
                                 BatchSeed seed, const Vec* probe_direction = nullptr);

/// The same for one rate.
RunRecord run_single(const Problem& problem, const OptimizerSpec& spec, const RunSettings& settings,
                     double rate, BatchSeed seed);

/// Iterations between evaluations once `eval_every` = 0 (auto) is resolved.
long resolved_eval_every(const Problem& problem, const OptimizerSpec& spec, const RunSettings& s);

}  // namespace stepgate
