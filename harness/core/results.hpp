// The Results model: everything a sweep of one suite produced, and its JSON form
// (results.json, format "stepgate.results/2"; docs/design.md, "results.json"). gate/ and report/
// read only this. A value that does not exist is NaN / nullopt here and null in JSON.
#pragma once
#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include <nlohmann/json.hpp>

#include "stepgate/core/baseline_check.hpp"
#include "stepgate/core/gate_tolerances.hpp"
#include "stepgate/core/optimizer_spec.hpp"
#include "stepgate/core/run_record.hpp"

namespace stepgate {

inline constexpr const char* kResultsFormat = "stepgate.results/2";

/// Why a run was made: the search step that asked for it, or `verify` for a probe of verify mode
/// (core/baseline_check.hpp).
enum class RunRole { grid, fixed, edge, floor, blowup, refine, verify };
std::string_view to_string(RunRole r);
std::optional<RunRole> run_role_from_string(std::string_view s);

/// A run as stored: the record plus its role. The trace is thinned on output.
struct StoredRun {
  RunRecord record;
  RunRole role = RunRole::grid;
};

/// One number of a struct S as results (and baselines) write it: its key and member; NaN is
/// written as null and null read as NaN. A struct's table is the one place its keys are named.
template <class S>
struct NumberField {
  std::string_view key;
  double S::*member;
};
/// A whole number of S (counts, iterations) as results and journals write it.
template <class S>
struct CountField {
  std::string_view key;
  long S::*member;
};
/// The same for a text that may be absent: "" is written as null and null read as "".
template <class S>
struct TextField {
  std::string_view key;
  std::string S::*member;
};

/// Theory beside measurement (docs/design.md, "Theory beside measurement").
struct CaseTheory {
  double L = kMissing;                 ///< λ_max used for the prediction
  double mu = kMissing;                ///< λ_min at the same point
  double lambda_max_start = kMissing, lambda_min_start = kMissing;
  double lambda_max_optimum = kMissing, lambda_min_optimum = kMissing;
  double predicted_blowup = kMissing;  ///< NaN where theory gives no threshold
  std::string rule;                    ///< "2/L", "2(1+beta)/L", ... ; "" when none
  std::string method;                  ///< how λ was computed
  /// What kind of threshold predicted_blowup is ("" when none): "quadratic" (the linear
  /// stability limit of a convex quadratic: it bounds the edge and predicts the blow-up),
  /// "local" (linearised at the optimum of a nonlinear loss: it bounds the edge only; such
  /// losses may orbit rather than blow up above it), "mean_square" (a mini-batch method's
  /// mean-square stability limit: a lower bound on the blow-up).
  std::string threshold;
};

/// L, mu, predicted_blowup and the four λ of CaseTheory; and its rule and method.
const std::vector<NumberField<CaseTheory>>& theory_number_fields();
const std::vector<TextField<CaseTheory>>& theory_text_fields();

/// Per-seed located boundaries.
struct SeedSummary {
  std::uint64_t seed = 0;          ///< the user's seed number (as in the suite)
  double floor = kMissing, edge = kMissing, blowup = kMissing;
  double edge_lo = kMissing, edge_hi = kMissing;  ///< the bracket of this seed's edge
  double best_rate = kMissing;
  /// The highest rate above this seed's edge at which it converged (grid, narrowing, fixed or
  /// refinement runs): the top of its ragged zone [edge, ragged_top]; NaN when none did.
  double ragged_top = kMissing;
  int runs = 0;
};
/// floor, edge, blowup, best_rate and ragged_top of SeedSummary (the bracket is a pair).
const std::vector<NumberField<SeedSummary>>& seed_number_fields();

struct ReferenceSummary {
  double min_lre = kMissing;
  std::string source;
  std::vector<std::string> names;
  std::vector<double> lre;         ///< per coefficient
  std::vector<double> estimate;    ///< solution in original units (from the best run of the first seed)
};

/// The located safe range of a case (docs/design.md words: floor, edge, blow-up, best, pinned,
/// headroom): what the results summarise and a baseline keeps of each case, declared once.
struct SafeRange {
  double floor = kMissing;
  double edge = kMissing;
  double edge_lo = kMissing, edge_hi = kMissing;  ///< edge_bracket: lo safe for all seeds, hi unsafe for some
  double blowup = kMissing;
  /// Ragged zone [edge, ragged_top]: near some edges the outcome alternates as the rate rises
  /// (converged, oscillating, converged); the edge stays the top of the contiguous safe range,
  /// and ragged_top is the highest rate above it at which some seed converged (max over the
  /// seeds' own ragged tops). NaN when no seed converged above its edge. results.json:
  /// "ragged_zone": [edge, ragged_top] or null.
  double ragged_top = kMissing;
  double best_rate = kMissing;
  double best_iterations = kMissing;   ///< median over seeds at best_rate
  double pinned = kMissing;
  double pinned_iterations = kMissing; ///< median over seeds at the pinned rate (when it was run)
  double headroom = kMissing;          ///< edge / pinned
  double edge_spread = kMissing;       ///< max/min of the seeds' edges (1 = all agree)
  double precision = kMissing;         ///< search precision in force
};

/// The numbers of SafeRange. The edge bracket (edge_lo, edge_hi) and the ragged zone are
/// written by each file in its own form.
using SafeRangeField = NumberField<SafeRange>;
/// floor, edge, blowup, best_rate, best_iterations, pinned, pinned_iterations, headroom,
/// edge_spread, precision: in the order both files write them.
const std::vector<SafeRangeField>& safe_range_fields();

/// The summary of a case: its safe range, plus what only the results keep.
struct CaseSummary : SafeRange {
  std::optional<Outcome> pinned_outcome;  ///< worst outcome over seeds at the pinned rate
  std::optional<ReferenceSummary> reference;
  std::vector<SeedSummary> seeds;
  int runs = 0;
};

struct CaseResult {
  std::string id;            ///< "problem/scaling/optimizer"
  std::string problem, scaling;
  std::string problem_kind;  ///< "least_squares", ...
  OptimizerSpec optimizer;   ///< with its label
  std::string dataset;       ///< dataset name ("" for problems without data)
  std::string data_sha256;   ///< "" for generated data or none
  double optimum_cost = kMissing;  ///< J* when known
  CaseTheory theory;
  CaseSummary summary;
  std::vector<StoredRun> runs;
  std::string error;         ///< non-empty when the case could not be run at all
  GateTolerances gate;       ///< the gate tolerances in force for this case (suite merged with problem)
  /// Verify mode (core/baseline_check.hpp): the probes run against the baseline and whether they
  /// agreed. Verified: `runs` are the probes (role verify) and the summary holds what they prove.
  /// Disagreed: the probes stay here and `runs` are the full search's. nullopt: searched without
  /// a check (no baseline, --full, `rates.verify` false, or a case the baseline does not hold).
  std::optional<BaselineCheck> verification;
  /// Elapsed seconds from the start of the case's search to its end (timing only; its batched
  /// lanes share this time, so it is not the sum of its runs' times).
  double wall_seconds = kMissing;
};

/// One reason why runs of a case failed (outcome `failed`), with the evidence of the first run
/// that failed for it, so that every report can say why (README, "Gating your own training
/// code"). Derived from the case's runs; results.json writes it as the case's "failures".
struct FailureReason {
  std::string reason;                ///< the runs' reason ("the program exited with status 1")
  int runs = 0;                      ///< how many of the case's runs failed for it
  // The first of them, in the order of the case's runs:
  double rate = kMissing;
  std::uint64_t seed = 0;            ///< the suite's seed number (summary.seeds), 0 when unknown
  std::string stderr_tail;           ///< the last lines of its stderr ("" for built-in runs)
  std::vector<std::string> command;  ///< its argv, placeholders expanded (empty for built-in runs)
  std::string request;               ///< serving mode: the request line it was answering
};
/// The distinct reasons of a case's failed runs, in order of first occurrence; empty when no
/// run failed.
std::vector<FailureReason> failure_reasons(const CaseResult& c);

/// A data set as loaded (before scaling): where it came from and what it held.
struct DatasetInfo {
  struct Column {
    std::string name;
    /// sd: population standard deviation (divisor n), the one `standardize` uses; in
    /// results.json "sd_population".
    double mean = kMissing, sd = kMissing;
  };
  std::string name;
  std::string source;   ///< file path(s) as resolved, or "generated"
  std::string sha256;   ///< of the file's bytes; "" for generated data
  /// The command that produced the file before the sweep (empty: none); results.json
  /// "produce": {"argv": [...], "cwd": "..."} or null.
  std::vector<std::string> produced_by;
  std::string produced_in;
  long rows = 0, columns = 0;
  std::vector<Column> stats;  ///< per feature, then the target
};

struct SuiteInfo {
  std::string name, path, sha256;
};
struct ToolInfo {
  std::string version, compiler, build;
};
struct HostInfo {
  std::string os, machine, hostname;
  unsigned cores = 0;
  int jobs = 0;  ///< --jobs in force (does not change any result)
  /// Instruction set the numerical kernels were built for and the vector units Eigen uses
  /// ("x86-64-v4; Eigen: AVX512, FMA, AVX2, ..."): results of different kernel sets differ
  /// in the last bits, within the gate's tolerances. "" when not recorded (older files).
  std::string kernels;
};

struct Results {
  std::string format = kResultsFormat;
  SuiteInfo suite;
  ToolInfo tool;
  HostInfo host;
  std::string started, finished;  ///< ISO 8601 UTC
  /// Elapsed seconds of the whole run, preparation included (timing only). Merged shards: the
  /// longest shard's, as shards run side by side.
  double wall_seconds = kMissing;
  std::vector<CaseResult> cases;
  /// Shard "K/N" when the results are a shard; "" for a whole suite (results.json: null).
  std::string shard;
  /// A shard's results: every case id of the whole plan, in plan order, so that merge can put
  /// the shards' cases back in that order and tell a missing one (results.json "plan_cases",
  /// only in shards).
  std::vector<std::string> plan_cases;
  GateTolerances gate;  ///< the suite-level gate section (for rules without a case)
  std::vector<DatasetInfo> datasets;  ///< every data set the cases used
};

/// Trace thinning on output: keeps iteration 0, log-spaced iterations (`per_decade` per factor
/// 10 of iterations), and the last `tail` evaluations, so that a 1e5-iteration run stores
/// about 100 points.
struct TraceThinning {
  int per_decade = 20;
  int tail = 10;
};
/// Indices into `trace` to store, increasing and without duplicates: index 0; for each target
/// 10^(m / per_decade), m = 0, 1, ..., the first point whose iter is at or after it; the last
/// `tail` points, and always the last point (even with tail <= 0). per_decade <= 0: no
/// log-spaced points. A 1e5-iteration trace with the defaults keeps 100 points.
std::vector<std::size_t> thinned_indices(const std::vector<TracePoint>& trace, const TraceThinning& t = {});
/// Keeps only the thinned points of every run's trace, in memory: the traces results.json
/// stores, so that reports rendered now equal those rendered later from the file, and a
/// resumed sweep (whose journal keeps thinned traces) equals an uninterrupted one. Idempotent.
void thin_traces(Results& results, const TraceThinning& t = {});

/// The JSON form (docs/design.md, "results.json"). NaN, nullopt and also ±inf are written as null
/// (JSON has no infinity; ±inf reads back as NaN). Traces are thinned to [iter, cost] pairs;
/// "final_cost" and "gap" are those of the last trace point; "iterations" is null unless
/// converged. Not stored: TracePoint.gap (but for the last point) and grad_norm, final_params.
nlohmann::json to_json(const Results& r, const TraceThinning& t = {});
/// Parses results.json, the inverse of to_json for what it stores (the last trace point gets the
/// run's "gap"; other points' gap and grad_norm are NaN). Throws InputError(path + "#" + JSON
/// pointer of the bad field, "expected ..., found ...") for a missing mandatory field or a wrong
/// type, and names the expected format when "format" is not kResultsFormat. Unknown fields are
/// ignored.
Results results_from_json(const nlohmann::json& j, const std::string& path);
/// Reads and parses a results file (InputError for unreadable or malformed files).
Results read_results(const std::string& path);
/// The text stepgate writes for a JSON document (indent 1, invalid UTF-8 replaced, final newline).
std::string json_file_text(const nlohmann::json& j);
/// Writes atomically: staged beside the target, flushed, then renamed; a symlink is written
/// through; anything else that is not a regular file is refused (core/output_files.hpp).
/// ToolError on I/O, InputError for a path that cannot be an output.
void write_json_atomically(const std::string& path, const nlohmann::json& j);
/// The same for text (reports, records).
void write_text_atomically(const std::string& path, const std::string& text);
/// Reads and parses any JSON file: InputError(path, "cannot read ...") when it cannot be read,
/// InputError("path:line:column", why) for a syntax error.
nlohmann::json read_json_file(const std::string& path);

/// Tool and host facts of this build and machine.
ToolInfo this_tool();
HostInfo this_host();
/// Current UTC time, ISO 8601 ("2026-12-01T19:06:35Z").
std::string utc_now();

}  // namespace stepgate
