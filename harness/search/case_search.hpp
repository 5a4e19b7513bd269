// The search of one case (docs/design.md, "Search"): for every seed a log grid plus the fixed rates,
// then the edge, floor and blow-up bracketed and narrowed, then the best rate refined; then the
// case's safe range across seeds, theory beside it, and the solution against reference values.
#pragma once
#include <cstdint>
#include <functional>
#include <optional>
#include <span>
#include <string>
#include <vector>

#include "stepgate/core/feature_map.hpp"
#include "stepgate/core/optimizer_spec.hpp"
#include "stepgate/core/rate_policy.hpp"
#include "stepgate/core/reference_values.hpp"
#include "stepgate/core/results.hpp"
#include "stepgate/core/run_settings.hpp"
#include "stepgate/run/batch.hpp"  // Problem comes with the runner that executes it

namespace stepgate {

/// Runs kept from before (a journal being resumed, sweep/journal.hpp) and the place to keep new
/// ones. The search asks before each batch and reports after it, from the case's own thread.
/// A batch is identified by its seed and its rates in order; the search is deterministic, so
/// a resumed case asks for the same batches in the same order.
class RunStore {
 public:
  virtual ~RunStore() = default;
  /// The records of this batch when all were kept before; nullopt: the batch must be run.
  virtual std::optional<std::vector<RunRecord>> recall(long seed_index, std::span<const double> rates) = 0;
  /// Keeps a finished batch; when it returns, the runs are on disk and count as done.
  virtual void keep(long seed_index, std::span<const double> rates, const std::vector<RunRecord>& records) = 0;
  /// Where the kept runs come from, for messages (the journal's path).
  virtual std::string where() const = 0;
};

struct CaseSearchInput {
  std::string case_id;                 ///< "problem/scaling/optimizer": part of every run's seed
  OptimizerSpec optimizer;
  RunSettings run;
  RatePolicy rates;
  std::vector<std::uint64_t> seeds;    ///< the user's seed numbers
  double pinned = kMissing;            ///< pinned rate (run as a fixed rate), NaN = none
  std::optional<ReferenceValues> reference;  ///< aligned to the problem's LinearLayout
  FeatureMap map;                      ///< scaling of the features (for the reference)
  RunStore* store = nullptr;           ///< runs kept and recalled (journal); nullptr = none
};

struct CaseSearchOutput {
  CaseSummary summary;
  CaseTheory theory;
  double optimum_cost = kMissing;
  std::vector<StoredRun> runs;         ///< every run, grouped by seed, in the order run
};

/// Called after each batch with the number of runs it held (for progress lines).
using BatchDone = std::function<void(int runs)>;

/// The run's seed: derive_seed(case id, seed number). Same coordinates, same seed, anywhere.
std::uint64_t run_seed(const std::string& case_id, std::uint64_t seed_number);

/// Deterministic: the same input gives the same output bits (timings aside).
CaseSearchOutput search_case(const Problem& problem, const CaseSearchInput& in,
                             const BatchDone& on_batch = {});

/// Runs a batch of rates for one seed (the runner of a command problem, for example).
using RunBatchFn = std::function<std::vector<RunRecord>(std::span<const double> rates, BatchSeed seed)>;

/// The same search with runs made by `run`. Without a problem (nullptr) there is no theory,
/// no optimum and no reference comparison: those fields stay null.
CaseSearchOutput search_case_with(const RunBatchFn& run, const Problem* problem, const CaseSearchInput& in,
                                  const BatchDone& on_batch = {});

}  // namespace stepgate
