#include "stepgate/sweep/sweep.hpp"

#include <atomic>
#include <chrono>
#include <mutex>
#include <thread>

#include <tbb/parallel_for.h>
#include <tbb/task_arena.h>

#include <fmt/format.h>

#include "stepgate/gate/baseline.hpp"
#include "stepgate/gate/findings.hpp"
#include "stepgate/run/command_runner.hpp"
#include "stepgate/search/case_search.hpp"
#include "stepgate/search/verify.hpp"
#include "stepgate/core/error.hpp"
#include "stepgate/sweep/journal.hpp"
#include "stepgate/sweep/prepare.hpp"

namespace stepgate {

namespace {

// The rule that failed on what verify mode's probes show, in words; "" when every rule passed.
std::string failing_rule(const CaseResult& r, const BaselineCase& b) {
  for (const Finding& f : case_findings(r, b))
    if (f.severity == Severity::fail) return fmt::format("{}: {}", to_string(f.rule), f.message);
  return "";
}

CaseResult run_case(const Suite& suite, const PlannedCase& c, const PreparedProblem& prepared,
                    const BatchDone& on_batch, int jobs, ProcessSlots& slots, Journal* journal,
                    const Baseline* verify_against) {
  const ProblemSpec& p = suite.problems[c.problem];
  CaseResult r;
  r.id = c.id;
  r.problem = p.name;
  r.scaling = c.scaling;
  r.problem_kind = problem_kind_name(p);  // a registered kind by its own name
  r.optimizer = suite.optimizers.at(c.optimizer);
  r.dataset = prepared.dataset;
  r.data_sha256 = prepared.data_sha256;
  r.summary.pinned = c.pinned;
  r.gate = p.gate;
  const auto started = std::chrono::steady_clock::now();
  try {
    CaseSearchInput in;
    in.case_id = c.id;
    in.optimizer = r.optimizer;
    in.run = p.run;
    in.rates = p.rates;
    in.seeds = p.seeds;
    in.pinned = c.pinned;
    in.reference = p.kind == ProblemKind::command ? p.reference : prepared.reference;
    in.map = prepared.map;
    std::unique_ptr<RunStore> store;
    if (journal) store = journal->store_for(c.id, in.reference.has_value()), in.store = store.get();
    std::optional<CommandSession> session;
    RunBatchFn runner;
    if (p.kind == ProblemKind::command) {
      session.emplace(CommandCase{p.command, c.id, c.scaling, r.optimizer, p.reference.has_value()}, p.run, jobs, &slots);
      runner = [&](std::span<const double> rates, BatchSeed seed) { return session->run(rates, seed); };
    }
    const Problem* problem = p.kind == ProblemKind::command ? nullptr : prepared.problem.get();
    auto take = [&](CaseSearchOutput&& out) {
      r.summary = std::move(out.summary);
      r.theory = std::move(out.theory);
      r.optimum_cost = out.optimum_cost;
      r.runs = std::move(out.runs);
    };
    // Verify mode: the baseline's boundaries first; the search only when they do not hold.
    const BaselineCase* b = verify_against && p.rates.verify ? verify_against->find(c.id) : nullptr;
    if (b && !std::isnan(b->edge)) {
      const VerifyTargets t{b->edge,      b->edge_hi,  b->ragged_top,      b->floor,          b->best_rate,
                            b->edge_seed, b->floor_seed, r.gate.edge_moved, r.gate.floor_moved};
      VerifyOutput v = runner ? verify_case_with(runner, problem, in, t, on_batch) : verify_case(*problem, in, t, on_batch);
      r.verification = std::move(v.check);
      if (v.verified) {
        take(std::move(*v.verified));
        if (std::string rule = failing_rule(r, *b); !rule.empty()) {
          r.verification->verified = false;
          r.verification->disagreement = "the probes agreed, but a gate rule fails on what they show, " + rule;
        }
      }
    }
    if (!r.verification || !r.verification->verified) {
      r.summary = CaseSummary{};
      r.summary.pinned = c.pinned;
      take(runner ? search_case_with(runner, nullptr, in, on_batch) : search_case(*problem, in, on_batch));
    }
  } catch (const InputError&) {
    throw;  // bad input (a journal of another plan) ends the whole run with exit 2, not one case
  } catch (const JournalWriteError&) {
    throw;  // a full disk ends the whole run at once (exit 3), not one case
  } catch (const std::exception& e) {
    r.error = e.what();
  }
  r.wall_seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
  return r;
}

}  // namespace

Results run_sweep(const Suite& suite, const Plan& plan, const SweepOptions& options,
                  const ProgressFn& progress) {
  Results results;
  results.suite = {suite.name, suite.path, suite.sha256};
  results.tool = this_tool();
  results.host = this_host();
  results.shard = options.shard;
  results.gate = suite.gate;
  results.started = utc_now();
  const auto started = std::chrono::steady_clock::now();

  const PreparedSweep prepared_sweep = prepare_problems(suite, plan);
  const std::map<PreparedKey, PreparedProblem>& prepared = prepared_sweep.problems;
  results.datasets = prepared_sweep.datasets;
  if (options.journal) {
    JournalIdentity id{suite.name, suite.sha256, fmt::format("{} ({}; {})", results.tool.version, results.tool.compiler,
                                                             results.tool.build),
                       options.shard, {}};
    for (const DatasetInfo& d : results.datasets) id.datasets.emplace_back(d.name, d.sha256);
    options.journal->start(id);
  }
  const int jobs = options.jobs > 0 ? options.jobs
                                    : static_cast<int>(std::max(1u, std::thread::hardware_concurrency()));
  results.host.jobs = jobs;

  std::vector<CaseResult> cases(plan.cases.size());
  std::mutex progress_mutex;
  SweepProgress state{0, plan.max_runs(), 0, static_cast<int>(plan.cases.size())};
  auto report = [&](int runs, int cases_finished) {
    if (!progress) return;
    std::lock_guard lock(progress_mutex);
    state.runs_done += runs;
    state.cases_done += cases_finished;
    progress(state);
  };

  // User processes at once across all cases: --jobs, or a command's own `parallel` if larger.
  int process_limit = jobs;
  for (const ProblemSpec& p : suite.problems)
    if (p.kind == ProblemKind::command) process_limit = std::max(process_limit, p.command.parallel);
  ProcessSlots slots(process_limit);

  tbb::task_arena arena(jobs);
  arena.execute([&] {
    tbb::parallel_for(std::size_t{0}, plan.cases.size(), [&](std::size_t i) {
      const PlannedCase& c = plan.cases[i];
      cases[i] = run_case(suite, c, prepared.at({c.problem, c.scaling}),
                          [&](int runs) { report(runs, 0); }, jobs, slots, options.journal, options.verify_against);
      report(0, 1);
    }, tbb::simple_partitioner());
  });
  results.cases = std::move(cases);
  results.finished = utc_now();
  results.wall_seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
  return results;
}

}  // namespace stepgate
