#include "stepgate/gate/theory_rule.hpp"

#include <algorithm>
#include <cmath>
#include <vector>

#include <fmt/format.h>

#include "stepgate/gate/moves.hpp"

namespace stepgate {

ThresholdKind threshold_kind(const std::string& threshold) {
  if (threshold == "quadratic") return ThresholdKind::quadratic;
  if (threshold == "mean_square") return ThresholdKind::mean_square;
  return ThresholdKind::local;
}

namespace {

std::string num(double v) { return std::isnan(v) ? "none" : fmt::format("{:.4g}", v); }

// One comparison of the rule; the finding is the worst of them, its text all of them.
struct Part {
  Severity severity = Severity::pass;
  std::string text;
  double value = kMissing;  ///< the measured value compared
};

// Verify mode ran probes only: no blow-up was looked for.
bool verified(const CaseResult& c) { return c.verification && c.verification->verified; }

double highest_rate_run(const CaseResult& c) {
  double top = 0.0;
  for (const StoredRun& r : c.runs) top = std::max(top, r.record.rate);
  return top;
}

// The factor between two rates, either way (>= 1).
double factor_between(double a, double b) { return std::max(a / b, b / a); }

Finding combine(const CaseResult& c, const std::vector<Part>& parts) {
  Finding f{c.id, Rule::theory, Severity::pass, "", c.theory.predicted_blowup, kMissing};
  for (const Part& p : parts) {
    if (!f.message.empty()) f.message += "; ";
    f.message += p.text;
    if (static_cast<int>(p.severity) > static_cast<int>(f.severity)) f.severity = p.severity, f.current = p.value;
  }
  // A pass shows the first value compared; a warn or fail the value that caused it.
  if (f.severity == Severity::pass)
    for (const Part& p : parts)
      if (!std::isnan(p.value)) {
        f.current = p.value;
        break;
      }
  return f;
}

// A mean-square limit: below it the error's second moment shrinks, so no run should blow up
// there; above it a run may still converge (the limit says nothing about a noisy edge).
Finding mean_square_finding(const CaseResult& c, double precision) {
  const double limit = c.theory.predicted_blowup, blowup = c.summary.blowup;
  const double slack = precision + c.gate.theory_slack, lowest = limit / (1.0 + slack);
  const std::string allowed =
      fmt::format("allowed down to {} = limit ÷ (1 + precision {} + theory_slack {})", num(lowest), num(precision),
                  num(c.gate.theory_slack));
  if (std::isnan(blowup) && verified(c))
    return combine(c, {{Severity::pass, fmt::format("blow-up not measured (verified against the baseline, not searched); "
                                                    "the mean-square stability limit is {} by {}",
                                                    num(limit), c.theory.rule)}});
  if (std::isnan(blowup))
    return combine(c, {{Severity::pass,
                        fmt::format("no run diverged up to {}; the mean-square stability limit {} by {} is a lower "
                                    "bound on the blow-up (the edge is not compared)",
                                    num(highest_rate_run(c)), num(limit), c.theory.rule)}});
  if (blowup < lowest)
    return combine(c, {{Severity::fail,
                        fmt::format("blow-up {} lies below the mean-square stability limit {} by {} ({}; {}): below "
                                    "the limit the error's second moment shrinks, so the gradient, the batch sampling "
                                    "or the curvature is likely wrong",
                                    num(blowup), num(limit), c.theory.rule, factor_text(limit, blowup), allowed),
                        blowup}});
  return combine(c, {{Severity::pass,
                      fmt::format("blow-up {} vs mean-square stability limit {} by {} ({}; a lower bound: {}; the "
                                  "edge is not compared)",
                                  num(blowup), num(limit), c.theory.rule, factor_text(limit, blowup), allowed),
                      blowup}});
}

// The edge against the threshold, either way, where the edge is the stability limit: gd is a
// descent method (below 2/L on a quadratic its cost falls at every step), so nothing but the
// budget stops it converging there. A momentum method's cost rings below its limit, and its edge
// is where the ringing exceeds `overshoot_limit` (delivery-ls/std/hb-0.9 in the demo: edge 0.970,
// limit 3.639): only an edge above the limit is wrong there.
Part edge_part(const CaseResult& c) {
  const CaseSummary& s = c.summary;
  const double predicted = c.theory.predicted_blowup;
  if (std::isnan(s.edge)) {
    double lowest = kMissing;
    for (const StoredRun& r : c.runs)
      if (std::isnan(lowest) || r.record.rate < lowest) lowest = r.record.rate;
    const std::string above = !std::isnan(lowest) && lowest > predicted
                                  ? fmt::format(" (the lowest rate run, {}, lies above the threshold {}: theory expects "
                                                "none to converge)",
                                                num(lowest), num(predicted))
                                  : "";
    return {Severity::pass, "no safe rate, so no edge to compare" + above};
  }
  if (c.optimizer.kind != OptimizerKind::gd)
    return {Severity::pass,
            fmt::format("edge {} not above the threshold {} by {} (with momentum the edge is where the ringing "
                        "exceeds overshoot_limit, so only an edge above the threshold is checked)",
                        num(s.edge), num(predicted), c.theory.rule),
            s.edge};
  // A ragged zone [edge, ragged_top] is one picture of the edge: the threshold inside it is a match.
  const double top = std::isnan(s.ragged_top) ? s.edge : std::max(s.edge, s.ragged_top);
  const double factor = predicted > top ? predicted / top : predicted < s.edge ? s.edge / predicted : 1.0;
  const std::string zone = top > s.edge ? fmt::format(" (ragged to {})", num(top)) : "";
  return {factor > c.gate.theory ? Severity::fail : Severity::pass,
          fmt::format("edge {}{} vs threshold {} by {} (factor {:.3f}, allowed {:.4g} = theory)", num(s.edge), zone,
                      num(predicted), c.theory.rule, factor, c.gate.theory),
          s.edge};
}

// The blow-up against the threshold, either way: exact only on a convex quadratic, whose
// curvature is the same everywhere. A nonlinear loss linearised at its optimum says nothing about
// rates far from it (logistic with l2 = 0.5 in the demo: edge 2.682 against 2/L* = 2.689, first
// divergence at 3.948 = 2/l2, the limit of the penalty alone).
Part blowup_part(const CaseResult& c, ThresholdKind kind) {
  const double predicted = c.theory.predicted_blowup, measured = c.summary.blowup;
  if (kind != ThresholdKind::quadratic) {
    if (std::isnan(measured)) return {};
    return {Severity::pass,
            fmt::format("blow-up {} not compared: the threshold is local (the loss linearised at its optimum) and "
                        "bounds the edge only",
                        num(measured)),
            measured};
  }
  if (!std::isnan(measured)) {
    const double factor = factor_between(measured, predicted);
    return {factor > c.gate.theory ? Severity::fail : Severity::pass,
            fmt::format("blow-up {} vs predicted {} (factor {:.3f}, allowed {:.4g} = theory)", num(measured),
                        num(predicted), factor, c.gate.theory),
            measured};
  }
  if (verified(c))
    return {Severity::pass, fmt::format("blow-up predicted at {}, not measured (verified against the baseline, not "
                                        "searched)", num(predicted))};
  const double top = highest_rate_run(c);
  if (predicted * c.gate.theory <= top)
    return {Severity::fail, fmt::format("theory predicts blow-up at {}, but no run diverged up to {}", num(predicted),
                                        num(top))};
  return {Severity::pass,
          fmt::format("blow-up predicted at {}, above the highest rate run ({})", num(predicted), num(top))};
}

}  // namespace

std::optional<Finding> theory_finding(const CaseResult& c) {
  const double predicted = c.theory.predicted_blowup;
  if (std::isnan(predicted)) return std::nullopt;
  const double precision = std::isnan(c.summary.precision) ? 0.0 : c.summary.precision;
  const ThresholdKind kind = threshold_kind(c.theory.threshold);
  if (kind == ThresholdKind::mean_square) return mean_square_finding(c, precision);
  // One-sided: no rate above the local stability limit can converge, so an edge above it is
  // wrong whatever else the runs say.
  const double edge = c.summary.edge, limit = predicted * (1.0 + precision + c.gate.theory_slack);
  if (!std::isnan(edge) && edge > limit)
    return combine(c, {{Severity::fail,
                        fmt::format("edge {} lies above the stability limit {} by {} ({}; allowed up to {} = limit × "
                                    "(1 + precision {} + theory_slack {})): no rate above it can converge, so runs "
                                    "stopped before they showed their instability, or a gradient or the curvature "
                                    "is scaled wrongly",
                                    num(edge), num(predicted), c.theory.rule, factor_text(predicted, edge), num(limit),
                                    num(precision), num(c.gate.theory_slack)),
                        edge}});
  std::vector<Part> parts = {edge_part(c)};
  Part blowup = blowup_part(c, kind);
  if (!blowup.text.empty()) parts.push_back(std::move(blowup));
  return combine(c, parts);
}

}  // namespace stepgate
