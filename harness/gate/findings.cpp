#include "stepgate/gate/findings.hpp"

#include <algorithm>
#include <cmath>
#include <set>

#include <fmt/format.h>

#include "stepgate/gate/moves.hpp"
#include "stepgate/gate/theory_rule.hpp"

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

class Gate {
 public:
  Gate(const Results& r, const Baseline* b) : results_(r), baseline_(b) {}
  GateReport apply();
  // The findings of one case; `b` is its baseline case (null: none, or no baseline).
  void check(const CaseResult& c, const BaselineCase* b);
  std::vector<Finding> take() { return std::move(report_.findings); }

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

// Moves of a located rate as factors (gate/moves.hpp), against allowances that are factors too,
// so that a halving and a doubling are the same size (docs/design.md, "Gate").
//
// The edge's allowance is the user's tolerance times the search's precision and nothing more:
// each edge is the lower end of a bracket at most 1 + precision wide that holds the true edge,
// so two searches of an unchanged edge differ by less than that factor. The seed spread widens
// nothing: the edge is the minimum over the suite's seeds, the same seeds in both runs (they are
// coordinates of the suite), so an unchanged case moves by 0 whatever the spread. The spread is
// shown beside the move.
void Gate::compare_range(const CaseResult& c, const BaselineCase& b) {
  const CaseSummary& s = c.summary;
  const GateTolerances& g = c.gate;
  const double precision = std::max(std::isnan(s.precision) ? 0.0 : s.precision, std::isnan(b.precision) ? 0.0 : b.precision);
  const std::string with_precision = precision > 0.0 ? fmt::format(" with precision {}", num(precision)) : "";
  if (std::isnan(b.edge) && std::isnan(s.edge)) {
    add(c.id, Rule::edge_moved, Severity::pass, "no safe rate, as in the baseline");
  } else if (std::isnan(s.edge)) {
    add(c.id, Rule::edge_moved, Severity::fail,
        fmt::format("no safe rate any more (baseline edge {})", num(b.edge)), b.edge, s.edge);
  } else if (std::isnan(b.edge)) {
    add(c.id, Rule::edge_moved, Severity::warn,
        fmt::format("a safe range appeared (edge {}); the baseline had none", num(s.edge)), b.edge, s.edge);
  } else {
    const double allowed = tolerance_log(g.edge_moved) + tolerance_log(precision);
    // Ragged zones: where outcomes alternate above the edge, an edge anywhere in [edge,
    // ragged_top] of either side is the same picture, so the move is measured between the zones.
    const double b_top = std::isnan(b.ragged_top) ? b.edge : std::max(b.edge, b.ragged_top);
    const double s_top = std::isnan(s.ragged_top) ? s.edge : std::max(s.edge, s.ragged_top);
    const double moved = ragged_move(b.edge, b_top, s.edge, s_top);
    const bool ragged = b_top > b.edge || s_top > s.edge;
    std::string zones;
    if (ragged)
      zones = fmt::format("; ragged zones: baseline [{}, {}], current [{}, {}], {}", num(b.edge), num(b_top), num(s.edge),
                          num(s_top), moved == 0.0 ? "overlapping" : fmt::format("a factor {:.4g} apart", std::exp(moved)));
    auto spread_of = [](double v) { return std::isnan(v) ? 1.0 : v; };
    std::string spreads;
    if (spread_of(b.edge_spread) > 1.0 || spread_of(s.edge_spread) > 1.0)
      spreads = fmt::format("; seed spread ×{:.4g} in the baseline, ×{:.4g} now: no allowance, the seeds are the same",
                            spread_of(b.edge_spread), spread_of(s.edge_spread));
    const BaselineCheck* v = c.verification && c.verification->verified ? &*c.verification : nullptr;
    if (v && !std::isnan(v->edge_outside))
      add(c.id, Rule::edge_moved, moved > allowed ? Severity::fail : Severity::pass,
          fmt::format("verified, not searched: every seed converged at {} and one did not at {}, so the edge lies in "
                      "[{}, {}) and a search would place it within {} of the baseline's {} (edge_moved {}{})",
                      num(v->edge_inside), num(v->edge_outside), num(v->edge_inside), num(v->edge_outside),
                      either_way_text(allowed), num(b.edge), num(g.edge_moved), with_precision),
          b.edge, s.edge);
    else if (v)
      add(c.id, Rule::edge_moved, moved > allowed ? Severity::fail : Severity::pass,
          fmt::format("verified, not searched: every seed still converges at the baseline's edge {}, the top of the grid",
                      num(b.edge)),
          b.edge, s.edge);
    else
      add(c.id, Rule::edge_moved, moved > allowed ? Severity::fail : Severity::pass,
          fmt::format("edge {} -> {} ({}{}; allowed {} = edge_moved {}{}{})", num(b.edge), num(s.edge),
                      factor_text(b.edge, s.edge), zones, either_way_text(allowed), num(g.edge_moved), with_precision,
                      spreads),
          b.edge, s.edge);
  }
  if (!std::isnan(b.floor) && !std::isnan(s.floor)) {
    // Floors are located to the same precision as edges; they are softer (budget-dependent), so
    // a move only warns.
    const double allowed = tolerance_log(g.floor_moved) + tolerance_log(precision);
    const double moved = log_move(b.floor, s.floor);
    if (c.verification && c.verification->verified)
      add(c.id, Rule::floor_moved, moved > allowed ? Severity::warn : Severity::pass,
          fmt::format("verified, not searched: every seed converged at {} and one did not at {}, so the floor lies in "
                      "({}, {}] and a search would place it within {} of the baseline's {} (floor_moved {}{})",
                      num(c.verification->floor_inside), num(c.verification->floor_outside),
                      num(c.verification->floor_outside), num(c.verification->floor_inside), either_way_text(allowed),
                      num(b.floor), num(g.floor_moved), with_precision),
          b.floor, s.floor);
    else
    add(c.id, Rule::floor_moved, moved > allowed ? Severity::warn : Severity::pass,
        fmt::format("floor {} -> {} ({}; allowed {} = floor_moved {}{})", num(b.floor), num(s.floor),
                    factor_text(b.floor, s.floor), either_way_text(allowed), num(g.floor_moved), with_precision),
        b.floor, s.floor);
  }
  if (!std::isnan(b.best_rate) && !std::isnan(s.best_rate)) {
    // best_moved is a factor already. A move by the factor itself warns: the rate may move by
    // less (the 1e-12 absorbs the rounding of a ratio such as 0.6 / 0.3). An unchanged rate never
    // warns, even at best_moved 1.
    const double allowed = std::log(g.best_moved), move = log_move(b.best_rate, s.best_rate);
    const bool moved = move > 0.0 && move >= allowed - 1e-12;
    add(c.id, Rule::best_moved, moved ? Severity::warn : Severity::pass,
        fmt::format("best rate {} -> {} ({}; allowed less than {} = best_moved {})", num(b.best_rate), num(s.best_rate),
                    factor_text(b.best_rate, s.best_rate), either_way_text(allowed), num(g.best_moved)),
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
  if (std::optional<Finding> f = theory_finding(c)) report_.findings.push_back(std::move(*f));
}

void Gate::check(const CaseResult& c, const BaselineCase* b) {
  if (!c.error.empty()) {
    add(c.id, Rule::case_presence, Severity::fail, "could not be run: " + c.error);
    return;
  }
  if (baseline_ && !b)
    add(c.id, Rule::case_presence, c.gate.case_added, "case added: not in the baseline");
  if (b) compare_range(c, *b);
  pinned(c, b);
  reference(c);
  theory(c);
}

GateReport Gate::apply() {
  report_.had_baseline = baseline_ != nullptr;
  if (baseline_ && baseline_->suite.sha256 != results_.suite.sha256)
    add(kSuiteFindingId, Rule::data_changed, results_.gate.data_changed,
        fmt::format("suite file changed: sha256 {} -> {}", baseline_->suite.sha256, results_.suite.sha256));
  std::set<std::string> seen;
  for (const CaseResult& c : results_.cases) {
    seen.insert(c.id);
    check(c, baseline_ ? baseline_->find(c.id) : nullptr);
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

std::vector<Finding> case_findings(const CaseResult& c, const BaselineCase& b) {
  const Results none;
  Gate gate(none, nullptr);
  gate.check(c, &b);
  return gate.take();
}

}  // namespace stepgate
