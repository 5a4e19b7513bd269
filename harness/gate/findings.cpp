#include "stepgate/gate/findings.hpp"

#include <algorithm>
#include <cmath>
#include <set>

#include <fmt/format.h>

namespace stepgate {

std::string_view to_string(Rule r) {
  switch (r) {
    case Rule::edge_moved: return "edge_moved";
    case Rule::floor_moved: return "floor_moved";
    case Rule::best_moved: return "best_moved";
    case Rule::pinned_headroom: return "pinned_headroom";
    case Rule::pinned_iterations: return "pinned_iterations";
    case Rule::min_lre: return "min_lre";
    case Rule::theory: return "theory";
    case Rule::case_presence: return "case_presence";
    case Rule::data_changed: return "data_changed";
  }
  return "edge_moved";
}

const std::vector<Rule>& baseline_free_rules() {
  static const std::vector<Rule> rules = {Rule::pinned_headroom, Rule::min_lre, Rule::theory};
  return rules;
}

std::optional<Severity> GateReport::worst(const std::string& id) const {
  std::optional<Severity> w;
  for (const Finding& f : findings)
    if (f.case_id == id && (!w || static_cast<int>(f.severity) > static_cast<int>(*w))) w = f.severity;
  return w;
}

std::vector<const Finding*> GateReport::of_case(const std::string& id) const {
  std::vector<const Finding*> out;
  for (const Finding& f : findings)
    if (f.case_id == id) out.push_back(&f);
  return out;
}

namespace {

std::string num(double v) { return std::isnan(v) ? "none" : fmt::format("{:.4g}", v); }

std::string change(double base, double now) {
  return fmt::format("{} -> {} ({:+.1f}%)", num(base), num(now), 100.0 * (now / base - 1.0));
}

}  // namespace

double ragged_move(double base_lo, double base_hi, double now_lo, double now_hi) {
  if (now_lo > base_hi) return now_lo / base_hi - 1.0;
  if (now_hi < base_lo) return 1.0 - now_hi / base_lo;
  return 0.0;
}

namespace {

class Gate {
 public:
  Gate(const Results& r, const Baseline* b) : results_(r), baseline_(b) {}
  GateReport apply();

 private:
  void add(const std::string& id, Rule rule, Severity s, std::string message, double base = kMissing,
           double now = kMissing) {
    report_.findings.push_back({id, rule, s, std::move(message), base, now});
  }
  void compare_range(const CaseResult& c, const BaselineCase& b);
  void pinned(const CaseResult& c, const BaselineCase* b);
  void reference(const CaseResult& c);
  void theory(const CaseResult& c);

  const Results& results_;
  const Baseline* baseline_;
  GateReport report_;
};

// A relative move of a located boundary, allowing for the search precision and the seed
// spread of both runs: a re-run with the same seeds moves by 0; other seeds move within the spread.
void Gate::compare_range(const CaseResult& c, const BaselineCase& b) {
  const CaseSummary& s = c.summary;
  const GateTolerances& g = c.gate;
  const double precision = std::isnan(s.precision) ? 0.0 : s.precision;
  auto spread = [](double v) { return std::isnan(v) ? 0.0 : std::max(0.0, v - 1.0); };
  if (std::isnan(b.edge) && std::isnan(s.edge)) {
    add(c.id, Rule::edge_moved, Severity::pass, "no safe rate, as in the baseline");
  } else if (std::isnan(s.edge)) {
    add(c.id, Rule::edge_moved, Severity::fail,
        fmt::format("no safe rate any more (baseline edge {})", num(b.edge)), b.edge, s.edge);
  } else if (std::isnan(b.edge)) {
    add(c.id, Rule::edge_moved, Severity::warn,
        fmt::format("a safe range appeared (edge {}); the baseline had none", num(s.edge)), b.edge, s.edge);
  } else {
    const double allowed = g.edge_moved + precision + spread(s.edge_spread) + spread(b.edge_spread);
    // Ragged zones: where outcomes alternate above the edge, an edge anywhere in [edge,
    // ragged_top] of either side is the same picture, so the move is measured between the zones.
    const double b_top = std::isnan(b.ragged_top) ? b.edge : std::max(b.edge, b.ragged_top);
    const double s_top = std::isnan(s.ragged_top) ? s.edge : std::max(s.edge, s.ragged_top);
    const double moved = ragged_move(b.edge, b_top, s.edge, s_top);
    const bool ragged = b_top > b.edge || s_top > s.edge;
    std::string zones;
    if (ragged)
      zones = fmt::format("; ragged zones: baseline [{}, {}], current [{}, {}], {} apart", num(b.edge), num(b_top),
                          num(s.edge), num(s_top), moved == 0.0 ? "overlapping" : fmt::format("{:.1f}%", 100.0 * moved));
    add(c.id, Rule::edge_moved, moved > allowed ? Severity::fail : Severity::pass,
        fmt::format("edge {} (allowed +-{:.1f}%){}", change(b.edge, s.edge), 100.0 * allowed, zones), b.edge, s.edge);
  }
  if (!std::isnan(b.floor) && !std::isnan(s.floor)) {
    const double allowed = g.floor_moved + precision;
    const double moved = std::abs(s.floor / b.floor - 1.0);
    add(c.id, Rule::floor_moved, moved > allowed ? Severity::warn : Severity::pass,
        fmt::format("floor {} (allowed +-{:.1f}%)", change(b.floor, s.floor), 100.0 * allowed), b.floor, s.floor);
  }
  if (!std::isnan(b.best_rate) && !std::isnan(s.best_rate)) {
    const double factor = std::max(s.best_rate / b.best_rate, b.best_rate / s.best_rate);
    add(c.id, Rule::best_moved, factor > g.best_moved ? Severity::warn : Severity::pass,
        fmt::format("best rate {} (factor {:.2f}, allowed {:.2f})", change(b.best_rate, s.best_rate), factor,
                    g.best_moved),
        b.best_rate, s.best_rate);
  }
  if (b.data_sha256 != c.data_sha256)
    add(c.id, Rule::data_changed, g.data_changed,
        fmt::format("data changed: sha256 {} -> {}", b.data_sha256.empty() ? "none" : b.data_sha256,
                    c.data_sha256.empty() ? "none" : c.data_sha256));
}

void Gate::pinned(const CaseResult& c, const BaselineCase* b) {
  const CaseSummary& s = c.summary;
  const GateTolerances& g = c.gate;
  if (std::isnan(s.pinned)) return;
  const std::string was = b && !std::isnan(b->headroom) ? fmt::format(" (baseline headroom {:.3g}×)", b->headroom) : "";
  if (s.pinned_outcome && *s.pinned_outcome != Outcome::converged) {
    add(c.id, Rule::pinned_headroom, Severity::fail,
        fmt::format("pinned rate {} is unsafe: {} for at least one seed{}", num(s.pinned), to_string(*s.pinned_outcome), was),
        b ? b->headroom : kMissing, s.headroom);
  } else if (std::isnan(s.edge)) {
    add(c.id, Rule::pinned_headroom, Severity::fail,
        fmt::format("pinned rate {} has no safe range around it{}", num(s.pinned), was));
  } else if (s.pinned < s.floor) {
    add(c.id, Rule::pinned_headroom, Severity::fail,
        fmt::format("pinned rate {} is below the floor {}{}", num(s.pinned), num(s.floor), was), b ? b->headroom : kMissing,
        s.headroom);
  } else {
    const bool ok = s.headroom >= g.pinned_headroom;
    add(c.id, Rule::pinned_headroom, ok ? Severity::pass : Severity::fail,
        fmt::format("pinned rate {}: headroom {:.3g}× (edge {}; required >= {:.3g}×){}", num(s.pinned), s.headroom,
                    num(s.edge), g.pinned_headroom, was),
        b ? b->headroom : kMissing, s.headroom);
  }
  if (b && !std::isnan(b->pinned_iterations) && !std::isnan(s.pinned_iterations) && b->pinned == s.pinned) {
    const double grew = s.pinned_iterations / b->pinned_iterations - 1.0;
    add(c.id, Rule::pinned_iterations, grew > g.pinned_iterations ? Severity::fail : Severity::pass,
        fmt::format("iterations at the pinned rate {} (allowed +{:.0f}%)", change(b->pinned_iterations, s.pinned_iterations),
                    100.0 * g.pinned_iterations),
        b->pinned_iterations, s.pinned_iterations);
  }
}

void Gate::reference(const CaseResult& c) {
  if (!c.summary.reference) return;
  const ReferenceSummary& r = *c.summary.reference;
  const double need = c.gate.min_lre;
  if (std::isnan(r.min_lre)) {
    add(c.id, Rule::min_lre, Severity::fail,
        fmt::format("no converged solution to compare with {}", r.source));
    return;
  }
  add(c.id, Rule::min_lre, r.min_lre < need ? Severity::fail : Severity::pass,
      fmt::format("min LRE {:.1f} against {}; required {:.1f}", r.min_lre, r.source, need), need,
      r.min_lre);
}

void Gate::theory(const CaseResult& c) {
  const double predicted = c.theory.predicted_blowup, measured = c.summary.blowup;
  if (std::isnan(predicted)) return;
  // One-sided: no rate above the local stability limit can converge, so an edge above it is
  // wrong whatever the blow-up says.
  const double precision = std::isnan(c.summary.precision) ? 0.0 : c.summary.precision;
  const double limit = predicted * (1.0 + precision + c.gate.theory_slack);
  if (!std::isnan(c.summary.edge) && c.summary.edge > limit) {
    add(c.id, Rule::theory, Severity::fail,
        fmt::format("edge {} lies above the stability limit {} by {} ({:+.1f}%; allowed up to {}): no rate above it "
                    "can converge, so runs stopped before they showed their instability, or a gradient or the "
                    "curvature is scaled wrongly",
                    num(c.summary.edge), num(predicted), c.theory.rule, 100.0 * (c.summary.edge / predicted - 1.0),
                    num(limit)),
        predicted, c.summary.edge);
    return;
  }
  double top = 0.0;
  for (const StoredRun& r : c.runs) top = std::max(top, r.record.rate);
  if (std::isnan(measured)) {
    // Losses that grow only linearly far from the optimum (logistic, softmax) do not blow up
    // above the threshold: the iteration orbits instead. There the threshold bounds the edge.
    const double edge = c.summary.edge;
    if (!std::isnan(edge)) {
      const double factor = std::max(edge / predicted, predicted / edge);
      add(c.id, Rule::theory, factor > c.gate.theory ? Severity::fail : Severity::pass,
          fmt::format("no run diverged up to {}; edge {} vs predicted threshold {} by {} (factor {:.3f}, allowed {:.2f})",
                      num(top), num(edge), num(predicted), c.theory.rule, factor, c.gate.theory),
          predicted, edge);
      return;
    }
    const bool reachable = predicted * c.gate.theory <= top;
    add(c.id, Rule::theory, reachable ? Severity::fail : Severity::pass,
        reachable ? fmt::format("theory ({}) predicts blow-up at {}, but no run diverged up to {} and none converged",
                                c.theory.rule, num(predicted), num(top))
                  : fmt::format("theory ({}) predicts blow-up at {}, above the highest rate run ({})", c.theory.rule,
                                num(predicted), num(top)),
        predicted, measured);
    return;
  }
  const double factor = std::max(measured / predicted, predicted / measured);
  add(c.id, Rule::theory, factor > c.gate.theory ? Severity::fail : Severity::pass,
      fmt::format("blow-up measured {} vs predicted {} by {} (factor {:.3f}, allowed {:.2f})", num(measured),
                  num(predicted), c.theory.rule, factor, c.gate.theory),
      predicted, measured);
}

GateReport Gate::apply() {
  report_.had_baseline = baseline_ != nullptr;
  if (baseline_ && baseline_->suite.sha256 != results_.suite.sha256)
    add(kSuiteFindingId, Rule::data_changed, results_.gate.data_changed,
        fmt::format("suite file changed: sha256 {} -> {}", baseline_->suite.sha256, results_.suite.sha256));
  std::set<std::string> seen;
  for (const CaseResult& c : results_.cases) {
    seen.insert(c.id);
    const BaselineCase* b = baseline_ ? baseline_->find(c.id) : nullptr;
    if (!c.error.empty()) {
      add(c.id, Rule::case_presence, Severity::fail, "could not be run: " + c.error);
      continue;
    }
    if (baseline_ && !b)
      add(c.id, Rule::case_presence, c.gate.case_added, "case added: not in the baseline");
    if (b) compare_range(c, *b);
    pinned(c, b);
    reference(c);
    theory(c);
  }
  if (baseline_ && results_.shard.empty())
    for (const BaselineCase& b : baseline_->cases)
      if (!seen.count(b.id))
        add(b.id, Rule::case_presence, results_.gate.case_missing, "case missing: in the baseline but not in the results");
  for (const Finding& f : report_.findings) {
    if (f.severity == Severity::fail) ++report_.failures;
    if (f.severity == Severity::warn) ++report_.warnings;
  }
  report_.pass = report_.failures == 0;
  return std::move(report_);
}

}  // namespace

GateReport apply_gate(const Results& results, const Baseline* baseline) {
  return Gate(results, baseline).apply();
}

}  // namespace stepgate
