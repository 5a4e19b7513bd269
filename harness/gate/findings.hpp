// The gate rules (docs/design.md, "Gate") applied to results and a baseline: one finding per case
// and rule, and the verdict.
#pragma once
#include <optional>
#include <string>
#include <vector>

#include "stepgate/core/gate_tolerances.hpp"
#include "stepgate/core/results.hpp"
#include "stepgate/gate/baseline.hpp"
#include "stepgate/gate/moves.hpp"

namespace stepgate {

/// The rules, by the names reports and JUnit use.
enum class Rule {
  edge_moved,          ///< edge moved by more than a factor (1+edge_moved)(1+precision)   (fail)
  floor_moved,         ///< floor moved by more than a factor (1+floor_moved)(1+precision) (warn)
  best_moved,          ///< best rate moved by a factor best_moved or more                 (warn)
  pinned_headroom,     ///< pinned rate outside [floor, edge / pinned_headroom] or unsafe    (fail)
  pinned_iterations,   ///< iterations at the pinned rate grew beyond tolerance           (fail)
  min_lre,    ///< min LRE below the requirement                                 (fail)
  theory,              ///< predicted threshold and measured edge or blow-up disagree, by threshold kind (fail)
  case_presence,       ///< case added (warn) or missing (fail); also "could not be run"
  data_changed,        ///< data or suite SHA-256 differs from the baseline              (warn)
};
std::string_view to_string(Rule r);

/// The rules that need no baseline, applied by `check`, `run` and `report` when none is given:
/// pinned_headroom, min_lre and theory (and case_presence's "could not be run").
const std::vector<Rule>& baseline_free_rules();

/// The case id of the findings about the suite itself (its file's hash): not a case.
inline constexpr const char* kSuiteFindingId = "(suite)";

struct Finding {
  std::string case_id;
  Rule rule = Rule::edge_moved;
  Severity severity = Severity::pass;
  std::string message;              ///< plain words with both values, e.g. "edge 0.5 -> 0.05 (÷10; allowed ...)"
  double baseline = kMissing;       ///< the value compared, when there is one
  double current = kMissing;
};

struct GateReport {
  std::vector<Finding> findings;    ///< in case order, then rule order
  bool pass = true;                 ///< no finding is `fail`
  int warnings = 0, failures = 0;
  /// Without a baseline only baseline_free_rules() are applied.
  bool had_baseline = false;
  std::vector<const Finding*> of_case(const std::string& id) const;
  /// The worst severity among the findings of `id`; nullopt when it has none.
  std::optional<Severity> worst(const std::string& id) const;
};

/// Applies every rule. `baseline` may be null: then only the baseline-free rules run.
/// Tolerances come from each case's `gate` (the suite's, merged per problem).
GateReport apply_gate(const Results& results, const Baseline* baseline);

/// The findings apply_gate gives one case against its baseline case (verify mode asks whether
/// what its probes show would pass before it trusts them).
std::vector<Finding> case_findings(const CaseResult& c, const BaselineCase& b);

}  // namespace stepgate
