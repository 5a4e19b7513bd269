// The `theory` gate rule (docs/design.md, "Gate"): a case's predicted threshold against what the
// search measured, by the kind of threshold theory gave (CaseTheory::threshold).
#pragma once
#include <optional>
#include <string>

#include "stepgate/core/results.hpp"
#include "stepgate/gate/findings.hpp"

namespace stepgate {

/// What a predicted threshold claims, hence what the rule compares it with.
enum class ThresholdKind {
  quadratic,    ///< linear stability limit of a convex quadratic: bounds the edge and is the blow-up
  local,        ///< linearised at the optimum of a nonlinear loss: bounds the edge only
  mean_square,  ///< a mini-batch method's mean-square stability limit: a lower bound on the blow-up
};

/// CaseTheory::threshold read as a kind. "" (results written before the field existed) and any
/// word this build does not know are `local`: the one claim that holds for both full-batch
/// kinds (the threshold bounds the edge), without the blow-up claim only quadratics support.
ThresholdKind threshold_kind(const std::string& threshold);

/// The rule's finding for a case, or nullopt when theory gives no threshold.
std::optional<Finding> theory_finding(const CaseResult& c);

}  // namespace stepgate
