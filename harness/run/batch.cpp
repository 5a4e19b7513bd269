#include "stepgate/run/batch.hpp"

#include <algorithm>
#include <chrono>
#include <cmath>
#include <numeric>
#include <optional>
#include <stdexcept>

#include "stepgate/analysis/curvature.hpp"
#include "stepgate/core/interrupt.hpp"
#include "stepgate/core/lanes.hpp"
#include "stepgate/core/seed.hpp"
#include "stepgate/run/minibatch.hpp"

namespace stepgate {

namespace {

using Clock = std::chrono::steady_clock;

// Size of the probe's kick, relative to max(1, ‖w‖): small enough that the dynamics around the
// run are linear (second-order terms 1e-8 of it), large enough that rounding (1e-16 · ‖w‖)
// is 1e-12 of it.
constexpr double kProbeKick = 1e-4;

// The proven early `slow` verdict (OutcomeMonitor::allow_slow_proof) needs gd's linear map:
// full batch, the same rate at every iteration; the problem must be a convex quadratic with a
// bound on λ_max, and each lane's rate below 2/bound (checked per lane).
bool slow_proof_holds(const OptimizerSpec& spec) {
  return spec.kind == OptimizerKind::gd && spec.batch_size == 0 && spec.schedule.kind == ScheduleKind::constant &&
         spec.schedule.warmup == 0;
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
                                 BatchSeed seed, const Vec* probe_direction) {
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
  const std::optional<Optimum> optimum =
      exact_gap || settings.skip_optimum ? std::nullopt : problem.optimum();
  const bool has_optimum = exact_gap || optimum.has_value();
  const double j_star = optimum ? optimum->cost : kMissing;

  std::vector<OutcomeMonitor> monitors(rates.size(),
                                       OutcomeMonitor(settings.outcome, has_optimum, settings.budget));
  if (reads_as_noisy(settings.outcome.noise, minibatch && spec.batch_size < problem.samples()))
    for (OutcomeMonitor& m : monitors) m.read_as_noisy(false);  // minibatches: stochastic by construction
  if (settings.prove_slow && slow_proof_holds(spec)) {
    const double bound = problem.quadratic_curvature_bound();  // NaN: not a convex quadratic
    for (Index j = 0; j < K; ++j)
      if (rates[j] > 0.0 && rates[j] * bound < 2.0) monitors[j].allow_slow_proof(every);
  }
  std::vector<bool> failed(rates.size(), false);
  const auto started = Clock::now();
  auto finish_lane = [&](RunRecord& r, const Mat& P, Index col, long steps) {
    r.steps = steps;
    if (settings.keep_final_params) r.final_params = P.col(col);
    r.wall_seconds = std::chrono::duration<double>(Clock::now() - started).count();
  };

  // Column j of the matrices runs record lanes[j].record; a probe column is a kicked copy of
  // that record's run during its confirmation (docs/design.md, "Confirmed convergence").
  struct Lane {
    Index record;
    bool probe;
  };
  std::vector<Lane> lanes;
  for (Index j = 0; j < K; ++j) lanes.push_back({j, false});
  std::vector<Index> probe_col(rates.size(), -1), main_col(rates.size(), -1);
  std::vector<double> kick(rates.size(), 0.0);
  auto index_columns = [&] {
    std::fill(probe_col.begin(), probe_col.end(), -1);
    std::fill(main_col.begin(), main_col.end(), -1);
    for (std::size_t j = 0; j < lanes.size(); ++j)
      (lanes[j].probe ? probe_col : main_col)[lanes[j].record] = static_cast<Index>(j);
  };
  index_columns();
  bool probing = settings.outcome.probe;
  Vec direction;
  if (probing && probe_direction) direction = *probe_direction;

  try {
    const Vec w0 = problem.start(seed.seed);
    Mat P = w0.replicate(1, K);
    Vec base = Eigen::Map<const Vec>(rates.data(), K);
    Vec step_rates(K), grad_norm(K);
    Evaluation ev;
    Scratch scratch;
    Mat G;
    std::optional<MiniBatches> batches;
    if (minibatch)
      batches.emplace(problem.samples(), spec.batch_size, derive_seed({seed.seed, std::string_view("minibatch")}),
                      spec.sampling);
    optimizer->reset(problem.dim(), K);
    std::vector<Index> keep, to_probe;
    keep.reserve(2 * rates.size());

    for (long t = 0;; ++t) {
      stop_point();  // Ctrl-C: leave the batch unfinished (Interrupted passes the handler below)
      const bool at_eval = t % every == 0 || t == settings.budget;
      if (at_eval || !minibatch) problem.evaluate(P, ev, scratch);
      bool changed = false;
      to_probe.clear();
      if (at_eval) {
        for (Index j = 0; j < P.cols(); ++j) {
          if (lanes[j].probe) continue;
          const Index rec = lanes[j].record;
          const double cost = ev.cost[j];
          const double gap = exact_gap ? ev.gap[j] : (has_optimum ? cost - j_star : kMissing);
          const TracePoint point{t, cost, gap, ev.grad.col(j).norm()};
          RunRecord& r = records[rec];
          r.trace.push_back(point);
          OutcomeMonitor& m = monitors[rec];
          if (probe_col[rec] >= 0) {
            const double growth = (P.col(probe_col[rec]) - P.col(j)).norm() / kick[rec];
            m.set_probe_growth(std::isfinite(growth) ? growth : kInf);
          }
          const bool was_confirming = m.confirming();
          if (m.observe(point)) {
            finish_lane(r, P, j, t);
            changed = true;
          } else if (!was_confirming && m.confirming() && probing) {
            to_probe.push_back(rec);
          } else if (was_confirming && !m.confirming() && probe_col[rec] >= 0) {
            changed = true;  // the stretch broke: its probe goes
          }
        }
      }
      if (t == settings.budget) {
        for (Index j = 0; j < P.cols(); ++j)
          if (!lanes[j].probe && !monitors[lanes[j].record].decided())
            finish_lane(records[lanes[j].record], P, j, t);
        break;
      }
      if (changed) {
        keep.clear();
        for (Index j = 0; j < P.cols(); ++j) {
          const OutcomeMonitor& m = monitors[lanes[j].record];
          if (!m.decided() && (!lanes[j].probe || m.confirming())) keep.push_back(j);
        }
        if (keep.empty()) break;
        keep_columns(P, keep);
        if (!minibatch) keep_columns(ev.grad, keep);
        keep_entries(base, keep);
        for (std::size_t j = 0; j < keep.size(); ++j) lanes[j] = lanes[keep[j]];
        lanes.resize(keep.size());
        optimizer->keep_lanes(keep);
        index_columns();
      }
      if (!to_probe.empty()) {
        if (direction.size() == 0) {
          try {  // once per batch, at the point of the first run to need it
            direction = top_eigenvector(problem, P.col(main_col[to_probe.front()]));
            if (!direction.allFinite() || direction.size() != problem.dim()) throw std::runtime_error("no direction");
          } catch (const std::exception&) {
            probing = false;  // no curvature here: confirmation by the stretch alone
          }
        }
        if (probing) {
          std::vector<Index> from;
          for (Index rec : to_probe) from.push_back(main_col[rec]);
          append_columns(P, from);
          if (!minibatch) append_columns(ev.grad, from);  // this step uses the unkicked gradient
          append_entries(base, from);
          optimizer->append_lanes(from);
          for (std::size_t i = 0; i < to_probe.size(); ++i) {
            const Index col = P.cols() - static_cast<Index>(to_probe.size()) + static_cast<Index>(i);
            kick[to_probe[i]] = kProbeKick * std::max(1.0, P.col(from[i]).norm());
            P.col(col) += kick[to_probe[i]] * direction;
            lanes.push_back({to_probe[i], true});
          }
          index_columns();
        }
      }
      if (step_rates.size() != P.cols()) step_rates.resize(P.cols());
      const Mat* grad = &ev.grad;
      if (minibatch) {
        problem.gradient_rows(P, batches->next(), G, scratch);
        grad = &G;
      }
      step_rates = base * spec.schedule.multiplier(t, settings.budget);
      optimizer->step(P, *grad, step_rates);
    }
  } catch (const std::exception& e) {
    for (std::size_t rec = 0; rec < records.size(); ++rec) {
      if (monitors[rec].decided() || main_col[rec] < 0) continue;
      failed[rec] = true;
      records[rec].outcome = Outcome::failed;
      records[rec].reason = e.what();
      records[rec].wall_seconds = std::chrono::duration<double>(Clock::now() - started).count();
    }
  }

  for (std::size_t j = 0; j < records.size(); ++j) {
    if (failed[j]) continue;
    record_classification(monitors[j].result(), records[j]);
  }
  return records;
}

RunRecord run_single(const Problem& problem, const OptimizerSpec& spec, const RunSettings& settings,
                     double rate, BatchSeed seed) {
  return std::move(run_batch(problem, spec, settings, std::span<const double>(&rate, 1), seed, nullptr).front());
}

}  // namespace stepgate
