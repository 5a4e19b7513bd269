#include "run/batch.hpp"

#include <chrono>
#include <numeric>
#include <optional>
#include <stdexcept>

#include "core/seed.hpp"
#include "run/minibatch.hpp"

namespace stepgate {

namespace {

using Clock = std::chrono::steady_clock;

// Moves the kept columns to the front, in order, and drops the rest.
void keep_columns(Mat& m, std::span<const Index> keep) {
  for (std::size_t j = 0; j < keep.size(); ++j)
    if (keep[j] != static_cast<Index>(j)) m.col(static_cast<Index>(j)) = m.col(keep[j]);
  m.conservativeResize(Eigen::NoChange, static_cast<Index>(keep.size()));
}

void keep_entries(Vec& v, std::span<const Index> keep) {
  for (std::size_t j = 0; j < keep.size(); ++j) v[static_cast<Index>(j)] = v[keep[j]];
  v.conservativeResize(static_cast<Index>(keep.size()));
}

}  // namespace

long resolved_eval_every(const Problem& problem, const OptimizerSpec& spec, const RunSettings& s) {
  if (s.eval_every > 0) return s.eval_every;
  if (spec.batch_size > 0 && problem.samples() > 0)
    return std::max<long>(1, static_cast<long>((problem.samples() + spec.batch_size - 1) / spec.batch_size));
  return 1;
}

std::vector<RunRecord> run_batch(const Problem& problem, const OptimizerSpec& spec,
                                 const RunSettings& settings, std::span<const double> rates,
                                 BatchSeed seed) {
  const Index K = static_cast<Index>(rates.size());
  std::vector<RunRecord> records(rates.size());
  for (Index j = 0; j < K; ++j) {
    records[j].rate = rates[j];
    records[j].seed = seed.seed;
    records[j].seed_index = seed.index;
  }
  if (K == 0) return records;
  if (settings.budget < 1) throw std::invalid_argument("budget must be at least 1 iteration");
  const bool minibatch = spec.batch_size > 0;
  if (minibatch && problem.samples() == 0)
    throw std::invalid_argument("a mini-batch optimizer needs a problem with samples");
  std::unique_ptr<Optimizer> optimizer = make_optimizer(spec);  // throws when the spec is invalid

  const long every = resolved_eval_every(problem, spec, settings);
  const bool exact_gap = problem.has_exact_gap();
  const std::optional<Optimum> optimum = exact_gap ? std::nullopt : problem.optimum();
  const bool has_optimum = exact_gap || optimum.has_value();
  const double j_star = optimum ? optimum->cost : kMissing;

  std::vector<OutcomeMonitor> monitors(rates.size(), OutcomeMonitor(settings.outcome, has_optimum));
  std::vector<bool> failed(rates.size(), false);
  const auto started = Clock::now();
  auto finish_lane = [&](RunRecord& r, const Mat& P, Index col, long steps) {
    r.steps = steps;
    if (settings.keep_final_params) r.final_params = P.col(col);
    r.wall_seconds = std::chrono::duration<double>(Clock::now() - started).count();
  };

  std::vector<Index> lane(rates.size());  // lane j of the matrices -> record index
  std::iota(lane.begin(), lane.end(), Index{0});
  try {
    const Vec w0 = problem.start(seed.seed);
    Mat P = w0.replicate(1, K);
    Vec base = Eigen::Map<const Vec>(rates.data(), K);
    Vec step_rates(K), grad_norm(K);
    Evaluation ev;
    Scratch scratch;
    Mat G;
    std::optional<MiniBatches> batches;
    if (minibatch) batches.emplace(problem.samples(), spec.batch_size, derive_seed({seed.seed, std::string_view("minibatch")}));
    optimizer->reset(problem.dim(), K);
    std::vector<Index> keep;
    keep.reserve(rates.size());

    for (long t = 0;; ++t) {
      const bool at_eval = t % every == 0 || t == settings.budget;
      if (at_eval || !minibatch) problem.evaluate(P, ev, scratch);
      bool dropped = false;
      if (at_eval) {
        for (Index j = 0; j < P.cols(); ++j) {
          const double cost = ev.cost[j];
          const double gap = exact_gap ? ev.gap[j] : (has_optimum ? cost - j_star : kMissing);
          const TracePoint point{t, cost, gap, ev.grad.col(j).norm()};
          RunRecord& r = records[lane[j]];
          r.trace.push_back(point);
          if (monitors[lane[j]].observe(point)) {
            finish_lane(r, P, j, t);
            dropped = true;
          }
        }
      }
      if (t == settings.budget) {
        for (Index j = 0; j < P.cols(); ++j)
          if (!monitors[lane[j]].decided()) finish_lane(records[lane[j]], P, j, t);
        break;
      }
      if (dropped) {
        keep.clear();
        for (Index j = 0; j < P.cols(); ++j)
          if (!monitors[lane[j]].decided()) keep.push_back(j);
        if (keep.empty()) break;
        keep_columns(P, keep);
        if (!minibatch) keep_columns(ev.grad, keep);
        keep_entries(base, keep);
        for (std::size_t j = 0; j < keep.size(); ++j) lane[j] = lane[keep[j]];
        lane.resize(keep.size());
        optimizer->keep_lanes(keep);
        step_rates.resize(P.cols());
      }
      const Mat* grad = &ev.grad;
      if (minibatch) {
        problem.gradient_rows(P, batches->next(), G, scratch);
        grad = &G;
      }
      step_rates = base * spec.schedule.multiplier(t, settings.budget);
      optimizer->step(P, *grad, step_rates);
    }
  } catch (const std::exception& e) {
    for (Index j : lane) {
      if (monitors[j].decided()) continue;
      failed[j] = true;
      records[j].outcome = Outcome::failed;
      records[j].reason = e.what();
      records[j].wall_seconds = std::chrono::duration<double>(Clock::now() - started).count();
    }
  }

  for (std::size_t j = 0; j < records.size(); ++j) {
    if (failed[j]) continue;
    const Classification c = monitors[j].result();
    records[j].outcome = c.outcome;
    records[j].iterations = c.iterations;
    records[j].overshoot = c.overshoot;
    records[j].reason = c.reason;
  }
  return records;
}

RunRecord run_single(const Problem& problem, const OptimizerSpec& spec, const RunSettings& settings,
                     double rate, BatchSeed seed) {
  return std::move(run_batch(problem, spec, settings, std::span<const double>(&rate, 1), seed).front());
}

}  // namespace stepgate
