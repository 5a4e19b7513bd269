#include "stepgate/search/case_search.hpp"
#include "stepgate/search/searcher.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <set>
#include <stdexcept>

#include <fmt/format.h>

#include "stepgate/analysis/curvature.hpp"
#include "stepgate/core/error.hpp"
#include "stepgate/analysis/reference.hpp"
#include "stepgate/analysis/safe_range.hpp"
#include "stepgate/analysis/seed_level.hpp"
#include "stepgate/core/seed.hpp"
#include "stepgate/run/batch.hpp"
#include "stepgate/run/step_rule.hpp"
#include "stepgate/search/bracket.hpp"
#include "stepgate/search/rate_grid.hpp"

namespace stepgate {

std::uint64_t run_seed(const std::string& case_id, std::uint64_t seed_number) {
  return derive_seed({std::string_view(case_id), seed_number});
}

namespace detail {

// A kept batch (a journal being resumed) must be the batch the plan asks for: its rates in
// order, this seed's derived seed, at most the budget's steps. Anything else is a journal of
// another plan or a damaged one: refused, never used.
void Searcher::check_kept(const std::vector<RunRecord>& kept, const std::vector<double>& todo, const BatchSeed& seed) const {
  for (std::size_t j = 0; j < kept.size(); ++j) {
    const RunRecord& k = kept[j];
    std::string why;
    if (k.rate != todo[j]) why = fmt::format("rate {} where the plan asks for {}", k.rate, todo[j]);
    else if (k.seed != seed.seed) why = fmt::format("rng_seed {} where this case and seed derive {}", k.seed, seed.seed);
    else if (k.steps > in_.run.budget) why = fmt::format("{} steps, above the budget of {}", k.steps, in_.run.budget);
    if (!why.empty())
      throw InputError(in_.store->where(), fmt::format("a kept run of case {} (seed {}) has {}; this journal does not "
                                                       "belong to this plan (run again without --resume)",
                                                       in_.case_id, seed.index + 1, why));
  }
}

std::vector<Outcome> Searcher::run(SeedRuns& s, const std::vector<double>& rates, RunRole role) {
  std::vector<double> todo;
  for (double r : rates)
    if (!at(s, r) && std::find(todo.begin(), todo.end(), r) == todo.end()) todo.push_back(r);
  if (!todo.empty()) {
    std::optional<std::vector<RunRecord>> kept;
    if (in_.store) kept = in_.store->recall(s.seed.index, todo);
    std::vector<RunRecord> records;
    if (kept && kept->size() == todo.size()) {
      check_kept(*kept, todo, s.seed);
      records = std::move(*kept);
    } else {
      records = runner_ ? runner_(todo, s.seed)
                        : run_batch(*problem_, in_.optimizer, in_.run, todo, s.seed,
                                    probe_direction_ ? &*probe_direction_ : nullptr);
      if (in_.store) in_.store->keep(s.seed.index, todo, records);
    }
    for (RunRecord& r : records) {
      // Kept and recalled as classified alone; held to the seed's level here, the same way
      // whether the run was made or recalled.
      if (s.best_level) hold_to_best_level(r, *s.best_level, in_.run.outcome);
      s.by_rate.emplace(r.rate, order_.size());
      order_.push_back(StoredRun{std::move(r), role});
    }
    s.summary.runs += static_cast<int>(todo.size());
    if (done_) done_(static_cast<int>(todo.size()));
  }
  std::vector<Outcome> out;
  for (double r : rates) out.push_back(at(s, r)->outcome);
  return out;
}

Bracket Searcher::narrow(SeedRuns& s, double lo, double hi, RunRole role, bool (*lower)(Outcome)) {
  SectionOptions opt;
  opt.precision = in_.rates.precision;
  opt.lanes = in_.rates.lanes;
  return narrow_bracket(lo, hi, opt, [&](std::span<const double> rates) {
    std::vector<bool> answers;
    for (Outcome o : run(s, std::vector<double>(rates.begin(), rates.end()), role))
      answers.push_back(lower(o));
    return answers;
  });
}

// The grid rate safe for every seed with the fewest median iterations (ties: the lower rate).
std::optional<std::size_t> Searcher::best_grid_index() const {
  std::optional<std::size_t> best;
  double best_iters = kInf;
  for (std::size_t i = 0; i < grid_.size(); ++i) {
    std::vector<double> iters;
    for (const SeedRuns& s : seeds_) {
      const RunRecord* r = at(s, grid_[i]);
      if (!r || !converged(r->outcome)) break;
      iters.push_back(static_cast<double>(*r->iterations));
    }
    if (iters.size() != seeds_.size()) continue;
    const double m = median(iters);
    if (m < best_iters) best_iters = m, best = i;
  }
  return best;
}

void Searcher::locate_seed(SeedRuns& s, std::optional<std::size_t> best) {
  SeedSummary& sum = s.summary;
  const RatePolicy& p = in_.rates;
  double edge_for_blowup = 0.0;
  if (best) {
    std::size_t lo = *best, hi = *best;
    while (lo > 0 && converged(at(s, grid_[lo - 1])->outcome)) --lo;
    while (hi + 1 < grid_.size() && converged(at(s, grid_[hi + 1])->outcome)) ++hi;
    // Edge: between the largest safe grid rate of the range and the next one.
    sum.edge = sum.edge_lo = grid_[hi];
    if (hi + 1 < grid_.size()) {
      sum.edge_hi = grid_[hi + 1];
      if (p.locate_edge) {
        const Bracket b = narrow(s, grid_[hi], grid_[hi + 1], RunRole::edge, [](Outcome o) { return converged(o); });
        sum.edge = sum.edge_lo = b.lo;
        sum.edge_hi = b.hi;
      }
    }
    // Floor: narrowed only when the grid has a slow rate just below the range.
    sum.floor = grid_[lo];
    if (lo > 0 && p.locate_floor && at(s, grid_[lo - 1])->outcome == Outcome::slow) {
      const Bracket b = narrow(s, grid_[lo - 1], grid_[lo], RunRole::floor, [](Outcome o) { return !converged(o); });
      sum.floor = b.hi;
    }
    edge_for_blowup = sum.edge;
  }
  // Blow-up: the lowest diverged rate above the edge, narrowed from the largest rate below it
  // that did not diverge.
  auto first_diverged_above = [&](double edge) -> std::optional<double> {
    for (const auto& [rate, index] : s.by_rate)
      if (rate > edge && diverged(outcome(index))) return rate;
    return std::nullopt;
  };
  if (auto hi = first_diverged_above(edge_for_blowup)) {
    std::optional<double> lo;
    for (const auto& [rate, index] : s.by_rate)
      if (rate < *hi && !diverged(outcome(index))) lo = rate;
    sum.blowup = *hi;
    if (lo && p.locate_blowup) {
      const Bracket b = narrow(s, *lo, *hi, RunRole::blowup, [](Outcome o) { return !diverged(o); });
      sum.blowup = b.hi;
    }
  }
}

void Searcher::prepare() {
  if (in_.run.outcome.probe && problem_ && !runner_ && !in_.run.skip_optimum) {
    try {
      if (const std::optional<Optimum> opt = problem_->optimum(); opt && opt->w.size() == problem_->dim())
        probe_direction_ = top_eigenvector(*problem_, opt->w);
    } catch (const std::exception&) {
      probe_direction_.reset();  // each batch tries at its own point
    }
  }
}

CaseSearchOutput Searcher::search() {
  const RatePolicy& p = in_.rates;
  prepare();
  if (p.grid) grid_ = log_grid(*p.grid);
  std::vector<double> fixed = p.fixed;
  if (!std::isnan(in_.pinned)) fixed.push_back(in_.pinned);
  for (SeedRuns& s : seeds_) {
    run(s, grid_, RunRole::grid);
    run(s, fixed, RunRole::fixed);
    set_best_level(s);
  }
  const std::optional<std::size_t> best = grid_.empty() ? std::nullopt : best_grid_index();
  for (SeedRuns& s : seeds_) locate_seed(s, best);
  // Refinement: rates between the grid neighbours of the best grid rate, for every seed.
  if (best && p.refine_points > 0) {
    double edge = kInf, floor = 0.0;
    for (const SeedRuns& s : seeds_) edge = std::min(edge, s.summary.edge), floor = std::max(floor, s.summary.floor);
    const double lo = std::max(*best > 0 ? grid_[*best - 1] : grid_[*best], floor);
    const double hi = std::min(*best + 1 < grid_.size() ? grid_[*best + 1] : grid_[*best], edge);
    if (hi > lo)
      for (SeedRuns& s : seeds_) run(s, log_between(lo, hi, p.refine_points), RunRole::refine);
  }
  CaseSearchOutput out;
  summarise(out);
  // The reference: the solution of the best rate's run of the first seed.
  finish(out, out.summary.best_rate);
  return out;
}

void Searcher::finish(CaseSearchOutput& out, double reference_rate) {
  if (problem_) {
    const bool use_optimum = !in_.run.skip_optimum;
    const Theory t = case_theory(*problem_, in_.optimizer, problem_->start(seeds_.empty() ? 0 : seeds_[0].seed.seed),
                                 {}, use_optimum);
    out.theory = {t.L, t.mu, t.at_start.lambda_max, t.at_start.lambda_min, t.at_optimum.lambda_max,
                  t.at_optimum.lambda_min, t.predicted_blowup, t.rule, t.at_start.method, t.threshold};
    if (!t.method.empty()) out.theory.method += "; " + t.method;
    if (!use_optimum)
      out.theory.method = "at the start only: the suite skips the optimum (\"optimum\": \"skip\"), so there is no "
                          "gap and no predicted threshold (" + t.at_start.method + ")";
    else if (auto opt = problem_->optimum())
      out.optimum_cost = opt->cost;
  } else {
    out.theory.method = "not available (command problem)";
  }
  compare_reference(out, reference_rate);
  out.runs = std::move(order_);
}

void Searcher::set_best_level(SeedRuns& s) {
  std::vector<const RunRecord*> runs;
  for (const auto& [rate, index] : s.by_rate) runs.push_back(&order_[index].record);
  s.best_level = best_level(runs, in_.run.outcome);
  for (const auto& [rate, index] : s.by_rate) hold_to_best_level(order_[index].record, *s.best_level, in_.run.outcome);
}

void Searcher::summarise(CaseSearchOutput& out) const {
  std::vector<SeedRunsView> views;
  for (const SeedRuns& s : seeds_) {
    SeedRunsView v{s.summary, {}};
    for (const auto& [rate, index] : s.by_rate) v.by_rate.emplace(rate, &order_[index].record);
    views.push_back(std::move(v));
  }
  out.summary = summarise_seeds(views, in_.rates.precision, in_.pinned);
}

void Searcher::compare_reference(CaseSearchOutput& out, double rate) const {
  if (!in_.reference) return;
  ReferenceSummary ref;
  ref.source = in_.reference->source;
  ref.names = in_.reference->names;
  // The solution of the first seed's run at `rate`, when it converged; without one, there is none.
  const RunRecord* r = std::isnan(rate) ? nullptr : at(seeds_.front(), rate);
  if (r && r->outcome != Outcome::converged) r = nullptr;
  if (!problem_) {  // a command: its params line, in the reference file's order, no scaling
    const Vec& x = r ? r->final_params : Vec();
    const Vec& c = in_.reference->values;
    if (r && x.size() != c.size())
      ref.source += fmt::format(" (the program's last params line has {} values; the reference has {})", x.size(), c.size());
    if (r && x.size() == c.size() && c.size() > 0) {
      ref.min_lre = kInf;
      for (Index i = 0; i < c.size(); ++i) {
        ref.lre.push_back(lre(x[i], c[i], in_.reference->digits));
        ref.min_lre = std::min(ref.min_lre, ref.lre.back());
      }
      ref.estimate.assign(x.data(), x.data() + x.size());
    }
    out.summary.reference = std::move(ref);
    return;
  }
  if (r && r->final_params.size() == problem_->dim()) {
    const ReferenceComparison cmp = compare_with_reference(*problem_, in_.map, r->final_params, *in_.reference);
    ref.lre = cmp.lre;
    ref.min_lre = cmp.min_lre;
    ref.estimate.assign(cmp.estimate.data(), cmp.estimate.data() + cmp.estimate.size());
  }
  out.summary.reference = std::move(ref);
}

// Settings built by a library caller get the checks a suite's get (suite/ reports them at their
// JSON pointer before any of this runs).
const CaseSearchInput& checked(const CaseSearchInput& in) {
  std::vector<std::string> errors;
  if (std::string e = validate(in.rates); !e.empty()) errors.push_back("rates: " + e);
  if (std::string e = validate(in.run); !e.empty()) errors.push_back(e);
  if (in.seeds.empty()) errors.push_back("no seeds, expected at least one");
  if (!errors.empty()) throw std::invalid_argument(fmt::format("case '{}': {}", in.case_id, fmt::join(errors, "; ")));
  return in;
}

}  // namespace detail

CaseSearchOutput search_case(const Problem& problem, const CaseSearchInput& in, const BatchDone& on_batch) {
  const RunBatchFn none;
  return detail::Searcher(none, &problem, detail::checked(in), on_batch).search();
}

CaseSearchOutput search_case_with(const RunBatchFn& run, const Problem* problem, const CaseSearchInput& in,
                                  const BatchDone& on_batch) {
  return detail::Searcher(run, problem, detail::checked(in), on_batch).search();
}

}  // namespace stepgate
