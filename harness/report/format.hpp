// The words and numbers every report shares (terminal, report.md, report.html, JUnit, the
// record): one number format, one mark for a missing value, one headroom format, the column
// headings of the per-case summary, and the one count line of the verdict.
#pragma once
#include <array>
#include <string>
#include <string_view>

#include "stepgate/core/results.hpp"
#include "stepgate/gate/findings.hpp"

namespace stepgate {

/// A value that does not exist (NaN), in every report: an en dash.
inline constexpr std::string_view kMissingMark = "–";

/// A rate, cost or count with 4 significant digits ("0.1234", "1.5e-05"); kMissingMark for NaN.
std::string format_number(double v);
/// A headroom or other factor with 3 significant digits and "×" ("6.17×"); kMissingMark for NaN.
std::string format_factor(double v);

/// The headings of the per-case summary, in order, as the terminal table, report.md and
/// report.html show them. "min LRE" is the agreement with a reference (log relative error,
/// McCullough 1998: about the number of correct significant digits), minimum over coefficients.
inline constexpr std::array<std::string_view, 8> kSummaryHeadings = {
    "case", "floor", "edge", "best rate", "pinned", "headroom", "min LRE", "worst finding"};

/// The verdict and its counts, the same words everywhere ("verdict: fail — 3 cases: 1 failing,
/// 1 with warnings, 1 passing"). Cases are counted by their worst finding; cases of the baseline
/// missing from the results count as cases; a finding of the suite itself (its file's hash) is
/// named after the counts.
std::string count_line(const GateReport& gate, const Results& results);

/// The line on verify mode (core/baseline_check.hpp) every report shows when some case was
/// checked against the baseline: how many were verified, in how many runs, how many were searched
/// after a probe disagreed, and what a verified case does not measure. "" when no case was checked.
std::string verify_line(const Results& results);

/// The edge as the summary tables show it: "0.5", "0.5 (ragged to 0.7)", or for a case verified
/// against the baseline the interval its probes proved, "[0.476, 0.53)".
std::string edge_cell(const CaseSummary& s, const std::optional<BaselineCheck>& check);

/// The worst finding of a case as the summary tables show it, with " (verified)" for a case
/// verified against the baseline and " (searched)" for one searched after its check disagreed.
std::string case_status(const CaseResult& c, const GateReport& gate);

/// The sentence that says which rules apply without a baseline (from baseline_free_rules()).
std::string baseline_free_note();

}  // namespace stepgate
