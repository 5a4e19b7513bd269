// Results -> results.json. Reading is in results_from_json.cpp, files in json_file.cpp, tool
// and host facts in host_info.cpp.
#include "stepgate/core/results.hpp"

#include <algorithm>
#include <cmath>

#include "stepgate/core/gate_tolerances_json.hpp"
#include "stepgate/core/json_node.hpp"
#include "stepgate/core/names.hpp"
#include "stepgate/core/optimizer_spec_json.hpp"
#include "stepgate/core/run_record_json.hpp"

namespace stepgate {

using nlohmann::json;

std::string_view to_string(RunRole r) {
  switch (r) {
    case RunRole::grid: return "grid";
    case RunRole::fixed: return "fixed";
    case RunRole::edge: return "edge";
    case RunRole::floor: return "floor";
    case RunRole::blowup: return "blowup";
    case RunRole::refine: return "refine";
    case RunRole::verify: return "verify";
  }
  return "grid";
}

std::optional<RunRole> run_role_from_string(std::string_view s) {
  using R = RunRole;
  static const std::vector<R> roles = {R::grid, R::fixed, R::edge, R::floor, R::blowup, R::refine, R::verify};
  return value_named(roles, s);
}

std::vector<std::size_t> thinned_indices(const std::vector<TracePoint>& trace,
                                         const TraceThinning& t) {
  std::vector<std::size_t> keep;
  const std::size_t n = trace.size();
  if (n == 0) return keep;
  keep.push_back(0);
  // Log-spaced targets 10^(m / per_decade), m = 0, 1, ...: keep the first point at or after
  // each target. Targets that fall between two points map to the same point (kept once).
  if (t.per_decade > 0) {
    int m = 0;
    double target = 1.0;
    const auto pass = [&](double iter) {  // the next target after `iter`
      while (target <= iter) target = std::pow(10.0, static_cast<double>(++m) / t.per_decade);
    };
    pass(static_cast<double>(trace[0].iter));
    for (std::size_t i = 1; i < n; ++i) {
      const auto iter = static_cast<double>(trace[i].iter);
      if (iter < target) continue;
      keep.push_back(i);
      pass(iter);
    }
  }
  // The tail, and always the last point: final_cost and gap are read from it.
  const std::size_t tail = static_cast<std::size_t>(std::max(t.tail, 1));
  for (std::size_t i = n > tail ? n - tail : 0; i < n; ++i) keep.push_back(i);
  std::sort(keep.begin(), keep.end());
  keep.erase(std::unique(keep.begin(), keep.end()), keep.end());
  return keep;
}

std::vector<FailureReason> failure_reasons(const CaseResult& c) {
  std::vector<FailureReason> out;
  for (const StoredRun& run : c.runs) {
    const RunRecord& r = run.record;
    if (r.outcome != Outcome::failed) continue;
    const auto same = std::find_if(out.begin(), out.end(), [&](const FailureReason& f) { return f.reason == r.reason; });
    if (same != out.end()) {
      ++same->runs;
      continue;
    }
    FailureReason f;
    f.reason = r.reason;
    f.runs = 1;
    f.rate = r.rate;
    if (r.seed_index >= 0 && static_cast<std::size_t>(r.seed_index) < c.summary.seeds.size())
      f.seed = c.summary.seeds[static_cast<std::size_t>(r.seed_index)].seed;
    f.stderr_tail = r.stderr_tail;
    f.command = r.command;
    f.request = r.request;
    out.push_back(std::move(f));
  }
  return out;
}

void thin_traces(Results& results, const TraceThinning& t) {
  for (CaseResult& c : results.cases)
    for (StoredRun& run : c.runs) {
      std::vector<TracePoint>& trace = run.record.trace;
      const std::vector<std::size_t> keep = thinned_indices(trace, t);
      for (std::size_t i = 0; i < keep.size(); ++i) trace[i] = trace[keep[i]];
      trace.resize(keep.size());
    }
}

const std::vector<SafeRangeField>& safe_range_fields() {
  using S = SafeRange;
  static const std::vector<SafeRangeField> fields = {
      {"floor", &S::floor},       {"edge", &S::edge},
      {"blowup", &S::blowup},     {"best_rate", &S::best_rate},
      {"best_iterations", &S::best_iterations}, {"pinned", &S::pinned},
      {"pinned_iterations", &S::pinned_iterations}, {"headroom", &S::headroom},
      {"edge_spread", &S::edge_spread}, {"precision", &S::precision},
  };
  return fields;
}

const std::vector<NumberField<CaseTheory>>& theory_number_fields() {
  using T = CaseTheory;
  static const std::vector<NumberField<T>> fields = {
      {"L", &T::L},
      {"mu", &T::mu},
      {"predicted_blowup", &T::predicted_blowup},
      {"lambda_max_start", &T::lambda_max_start},
      {"lambda_min_start", &T::lambda_min_start},
      {"lambda_max_optimum", &T::lambda_max_optimum},
      {"lambda_min_optimum", &T::lambda_min_optimum},
  };
  return fields;
}

const std::vector<NumberField<SeedSummary>>& seed_number_fields() {
  using S = SeedSummary;
  static const std::vector<NumberField<S>> fields = {
      {"floor", &S::floor}, {"edge", &S::edge}, {"blowup", &S::blowup}, {"best_rate", &S::best_rate},
      {"ragged_top", &S::ragged_top}};
  return fields;
}

const std::vector<TextField<CaseTheory>>& theory_text_fields() {
  static const std::vector<TextField<CaseTheory>> fields = {{"rule", &CaseTheory::rule}, {"method", &CaseTheory::method}, {"threshold", &CaseTheory::threshold}};
  return fields;
}

namespace {

json to_json(const RunRecord& r, RunRole role, const TraceThinning& t) {
  RunRecordStyle style;
  style.thinning = t;
  json j = to_json(r, style);
  // Beside the record: why the run was made, and its last point's cost and gap.
  const TracePoint* last = r.last();
  j["role"] = to_string(role);
  j["final_cost"] = last ? finite_or_null(last->cost) : json(nullptr);
  j["gap"] = last ? finite_or_null(last->gap) : json(nullptr);
  return j;
}

json numbers(const std::vector<double>& v) {
  json a = json::array();
  for (double x : v) a.push_back(finite_or_null(x));
  return a;
}

json to_json(const ReferenceSummary& r) {
  return {{"min_lre", finite_or_null(r.min_lre)},
          {"source", r.source},
          {"names", r.names},
          {"lre", numbers(r.lre)},
          {"estimate", numbers(r.estimate)}};
}

json to_json(const SeedSummary& s) {
  json out = {{"seed", s.seed},
              {"edge_bracket", json::array({finite_or_null(s.edge_lo), finite_or_null(s.edge_hi)})},
              {"runs", s.runs}};
  for (const auto& f : seed_number_fields()) out[std::string(f.key)] = finite_or_null(s.*f.member);
  return out;
}

json to_json(const CaseSummary& s) {
  json seeds = json::array();
  for (const SeedSummary& seed : s.seeds) seeds.push_back(to_json(seed));
  json out = json::object();
  for (const SafeRangeField& f : safe_range_fields()) out[std::string(f.key)] = finite_or_null(s.*f.member);
  out["edge_bracket"] = json::array({finite_or_null(s.edge_lo), finite_or_null(s.edge_hi)});
  out["ragged_zone"] =
      std::isnan(s.ragged_top) ? json(nullptr) : json::array({finite_or_null(s.edge), finite_or_null(s.ragged_top)});
  out["pinned_outcome"] = s.pinned_outcome ? json(to_string(*s.pinned_outcome)) : json(nullptr);
  out["runs"] = s.runs;
  out["reference"] = s.reference ? to_json(*s.reference) : json(nullptr);
  out["seeds"] = std::move(seeds);
  return out;
}

json to_json(const CaseTheory& t) {
  json out = json::object();
  for (const auto& f : theory_number_fields()) out[std::string(f.key)] = finite_or_null(t.*f.member);
  for (const auto& f : theory_text_fields()) out[std::string(f.key)] = text_or_null(t.*f.member);
  return out;
}

// Derived from the runs (and not read back): why runs failed, for readers of the file.
json failures_json(const CaseResult& c) {
  json out = json::array();
  for (const FailureReason& f : failure_reasons(c))
    out.push_back({{"reason", f.reason},
                   {"runs", f.runs},
                   {"first", {{"rate", finite_or_null(f.rate)},
                              {"seed", f.seed},
                              {"stderr", text_or_null(f.stderr_tail)},
                              {"command", f.command},
                              {"request", text_or_null(f.request)}}}});
  return out;
}

json to_json(const BaselineCheck& v) {
  json probes = json::array();
  for (const BoundaryProbe& p : v.probes)
    probes.push_back({{"kind", to_string(p.kind)},
                      {"rate", finite_or_null(p.rate)},
                      {"seed", p.seed},
                      {"outcome", to_string(p.outcome)},
                      {"as_expected", p.as_expected}});
  return {{"verified", v.verified},
          {"disagreement", text_or_null(v.disagreement)},
          {"baseline_edge", finite_or_null(v.baseline_edge)},
          {"baseline_floor", finite_or_null(v.baseline_floor)},
          {"edge_probes", json::array({finite_or_null(v.edge_inside), finite_or_null(v.edge_outside)})},
          {"floor_probes", json::array({finite_or_null(v.floor_inside), finite_or_null(v.floor_outside)})},
          {"runs", v.runs},
          {"probes", std::move(probes)},
          {"proves", describe(v)}};
}

json to_json(const CaseResult& c, const TraceThinning& t) {
  json runs = json::array();
  for (const StoredRun& run : c.runs) runs.push_back(to_json(run.record, run.role, t));
  return {{"id", c.id},
          {"problem", c.problem},
          {"scaling", c.scaling},
          {"problem_kind", c.problem_kind},
          {"optimizer", to_json(c.optimizer)},
          {"dataset", text_or_null(c.dataset)},
          {"data_sha256", text_or_null(c.data_sha256)},
          {"optimum_cost", finite_or_null(c.optimum_cost)},
          {"error", text_or_null(c.error)},
          {"theory", to_json(c.theory)},
          {"summary", to_json(c.summary)},
          {"verification", c.verification ? to_json(*c.verification) : json(nullptr)},
          {"failures", failures_json(c)},
          {"runs", std::move(runs)},
          {"gate", to_json(c.gate)},
          {"wall_seconds", finite_or_null(c.wall_seconds)}};
}

}  // namespace

json to_json(const Results& r, const TraceThinning& t) {
  json datasets = json::array();
  for (const DatasetInfo& d : r.datasets) {
    json stats = json::array();
    for (const DatasetInfo::Column& c : d.stats)
      stats.push_back({{"name", c.name}, {"mean", finite_or_null(c.mean)}, {"sd_population", finite_or_null(c.sd)}});
    datasets.push_back({{"name", d.name}, {"source", d.source}, {"sha256", d.sha256}, {"rows", d.rows},
                        {"columns", d.columns},
                        {"produce", d.produced_by.empty() ? json(nullptr)
                                                          : json{{"argv", d.produced_by}, {"cwd", d.produced_in}}},
                        {"stats", std::move(stats)}});
  }
  json cases = json::array();
  for (const CaseResult& c : r.cases) cases.push_back(to_json(c, t));
  // The format written is always this build's: r.format only records what was read.
  json out = {{"format", kResultsFormat},
          {"suite", {{"name", r.suite.name}, {"path", r.suite.path}, {"sha256", r.suite.sha256}}},
          {"tool", {{"version", r.tool.version}, {"compiler", r.tool.compiler}, {"build", r.tool.build}}},
          {"host",
           {{"os", r.host.os},
            {"machine", r.host.machine},
            {"hostname", r.host.hostname},
            {"cores", r.host.cores},
            {"jobs", r.host.jobs},
            {"kernels", r.host.kernels}}},
          {"started", r.started},
          {"finished", r.finished},
          {"wall_seconds", finite_or_null(r.wall_seconds)},
          {"shard", r.shard.empty() ? json(nullptr) : json(r.shard)},
          {"gate", to_json(r.gate)},
          {"datasets", std::move(datasets)},
          {"cases", std::move(cases)}};
  if (!r.shard.empty()) out["plan_cases"] = r.plan_cases;
  return out;
}

}  // namespace stepgate
