// RunRecord <-> JSON: the one writer and reader of a run, for both files that hold runs.
// results.json keeps what a reader plots (non-finite numbers as null, the trace thinned to
// [iteration, cost]); the journal keeps every double exactly (±inf as the words "inf" and
// "-inf"), the trace with gap and gradient norm, and the final parameters, so that a resumed
// sweep equals an uninterrupted one. The keys are the same in both.
#pragma once
#include <vector>

#include <nlohmann/json.hpp>

#include "stepgate/core/json_node.hpp"
#include "stepgate/core/results.hpp"
#include "stepgate/core/run_record.hpp"

namespace stepgate {

struct RunRecordStyle {
  bool exact = false;         ///< every double exactly, ±inf as words (journal); else non-finite -> null
  bool full_trace = false;    ///< trace points [iter, cost, gap, grad_norm]; else [iter, cost]
  bool final_params = false;  ///< write final_params
  TraceThinning thinning{};
};
/// results.json's style (the default) and the journal's.
inline constexpr RunRecordStyle kJournalStyle{true, true, true, {}};

/// A number in the style's form, and back (null reads as NaN; "inf" and "-inf" in the exact style).
nlohmann::json number_json(double x, const RunRecordStyle& style);
double number_from_json(const JsonField& f, const RunRecordStyle& style);

/// rate, overshoot, noise, wall_seconds: the numbers of a run.
const std::vector<NumberField<RunRecord>>& run_number_fields();
/// seed_index, steps, log_lines: its counts. rng_seed (64 bits), outcome, reason,
/// converged_at, confirmation, trace and final_params have their own shapes; a failed command
/// run's "stderr", "command" (argv) and "request" are written only when not empty.
const std::vector<CountField<RunRecord>>& run_count_fields();

/// The record's keys. final_params only with style.final_params (and when kept).
nlohmann::json to_json(const RunRecord& r, const RunRecordStyle& style);
/// The inverse; InputError at the JSON pointer of the first bad field. Keys it does not know
/// are left to the caller (results add role, final_cost and gap).
RunRecord run_record_from(const JsonField& f, const RunRecordStyle& style);

}  // namespace stepgate
