#include <cmath>
#include <set>

#include <fmt/format.h>
// results.json -> Results: strict about the fields it knows (InputError with the JSON pointer),
// silent about fields it does not (newer writers may add them).
#include "stepgate/core/results.hpp"

#include "stepgate/core/gate_tolerances_json.hpp"
#include "stepgate/core/json_node.hpp"
#include "stepgate/core/optimizer_spec_json.hpp"
#include "stepgate/core/run_record_json.hpp"
#include "stepgate/core/safe_range_check.hpp"

namespace stepgate {

using nlohmann::json;

namespace {

void read_bracket(const JsonField& f, double& lo, double& hi) {
  if (f.array_size() != 2) f.expected("a pair [lo, hi]");
  lo = f[0].number_or_missing();
  hi = f[1].number_or_missing();
}

std::vector<double> read_numbers(const JsonField& f) {
  std::vector<double> v(f.array_size());
  for (std::size_t i = 0; i < v.size(); ++i) v[i] = f[i].number_or_missing();
  return v;
}

std::vector<std::string> read_strings(const JsonField& f) {
  std::vector<std::string> v(f.array_size());
  for (std::size_t i = 0; i < v.size(); ++i) v[i] = f[i].string();
  return v;
}

Outcome read_outcome(const JsonField& f) {
  const auto o = outcome_from_string(f.string());
  if (!o) f.expected("an outcome (converged, slow, oscillating, diverged, failed)");
  return *o;
}

StoredRun read_run(const JsonField& f) {
  StoredRun run;
  run.record = run_record_from(f, RunRecordStyle{});
  const JsonField role = f["role"];
  const auto rr = run_role_from_string(role.string());
  if (!rr) role.expected("a run role (grid, fixed, edge, floor, blowup, refine, verify)");
  run.role = *rr;
  // final_cost is the last trace point's cost (checked for type, derived on output); the gap
  // is stored only at run level and goes back to the last point, where it came from.
  f["final_cost"].number_or_missing();
  const double gap = f["gap"].number_or_missing();
  if (!run.record.trace.empty()) run.record.trace.back().gap = gap;
  return run;
}

ReferenceSummary read_reference(const JsonField& f) {
  ReferenceSummary r;
  r.min_lre = f["min_lre"].number_or_missing();
  r.source = f["source"].string();
  r.names = read_strings(f["names"]);
  r.lre = read_numbers(f["lre"]);
  r.estimate = read_numbers(f["estimate"]);
  return r;
}

SeedSummary read_seed(const JsonField& f) {
  SeedSummary s;
  s.seed = f["seed"].integer_as<std::uint64_t>();
  for (const auto& field : seed_number_fields()) {
    s.*field.member = f[field.key].number_or_missing();
    if (const double v = s.*field.member; !std::isnan(v) && !(std::isfinite(v) && v > 0.0))
      f[field.key].expected("a rate > 0 or null");
  }
  read_bracket(f["edge_bracket"], s.edge_lo, s.edge_hi);
  s.runs = f["runs"].integer_as<int>();
  return s;
}

CaseSummary read_summary(const JsonField& f) {
  CaseSummary s;
  for (const SafeRangeField& field : safe_range_fields()) s.*field.member = f[std::string(field.key)].number_or_missing();
  read_bracket(f["edge_bracket"], s.edge_lo, s.edge_hi);
  if (const JsonField zone = f["ragged_zone"]; !zone.is_null()) {
    if (zone.array_size() != 2) zone.expected("[edge, highest converged rate] or null");
    const double start = zone[0].number_or_missing();
    if (!(start == s.edge)) zone[0].expected(fmt::format("the edge {} (the zone starts at the edge)", s.edge));
    s.ragged_top = zone[1].number_or_missing();
  }
  check_safe_range(s, f);
  if (const JsonField po = f["pinned_outcome"]; !po.is_null()) s.pinned_outcome = read_outcome(po);
  s.runs = f["runs"].integer_as<int>();
  if (const JsonField ref = f["reference"]; !ref.is_null()) s.reference = read_reference(ref);
  const JsonField seeds = f["seeds"];
  for (std::size_t i = 0; i < seeds.array_size(); ++i) s.seeds.push_back(read_seed(seeds[i]));
  return s;
}

CaseTheory read_theory(const JsonField& f) {
  CaseTheory t;
  for (const auto& field : theory_number_fields()) t.*field.member = f[field.key].number_or_missing();
  for (const auto& field : theory_text_fields()) t.*field.member = f[field.key].string_or_empty();
  return t;
}

BaselineCheck read_verification(const JsonField& f) {
  BaselineCheck v;
  v.verified = f["verified"].boolean();
  v.disagreement = f["disagreement"].string_or_empty();
  v.baseline_edge = f["baseline_edge"].number_or_missing();
  v.baseline_floor = f["baseline_floor"].number_or_missing();
  read_bracket(f["edge_probes"], v.edge_inside, v.edge_outside);
  read_bracket(f["floor_probes"], v.floor_inside, v.floor_outside);
  v.runs = f["runs"].integer_as<int>();
  const JsonField probes = f["probes"];
  for (std::size_t i = 0; i < probes.array_size(); ++i) {
    const JsonField p = probes[i];
    BoundaryProbe b;
    const auto kind = probe_kind_from_string(p["kind"].string());
    if (!kind) p["kind"].expected("a probe kind (pinned, edge_inside, edge_outside, floor_inside, floor_outside, reference)");
    b.kind = *kind;
    b.rate = p["rate"].number_or_missing();
    b.seed = p["seed"].integer_as<std::uint64_t>();
    b.outcome = read_outcome(p["outcome"]);
    b.as_expected = p["as_expected"].boolean();
    v.probes.push_back(b);
  }
  return v;
}

// What the summary says of the runs must be so in the runs: a seed's edge is a rate where that
// seed's run converged, the top of its bracket one where it did not, and the pinned outcome is
// the worst outcome at the pinned rate. (Every run's outcome changed under an unchanged summary
// is refused here.)
void check_summary_against_runs(const CaseResult& c, const JsonField& f) {
  const auto run_at = [&](long seed_index, double rate, bool want_converged) {
    for (const StoredRun& r : c.runs)
      if (r.record.seed_index == seed_index && r.record.rate == rate &&
          (r.record.outcome == Outcome::converged) == want_converged)
        return true;
    return false;
  };
  const JsonField seeds = f["summary"]["seeds"];
  for (std::size_t i = 0; i < c.summary.seeds.size(); ++i) {
    const SeedSummary& x = c.summary.seeds[i];
    if (!std::isnan(x.edge) && !run_at(static_cast<long>(i), x.edge, true))
      seeds[i]["edge"].expected("a rate at which a run of this seed converged (no run of it did)");
    if (!std::isnan(x.edge_hi) && !run_at(static_cast<long>(i), x.edge_hi, false))
      seeds[i]["edge_bracket"].expected("[lo, hi] with hi a rate at which a run of this seed did not converge");
  }
  if (!std::isnan(c.summary.pinned)) {
    std::optional<Outcome> worst;
    for (const StoredRun& r : c.runs)
      if (r.record.rate == c.summary.pinned && (!worst || r.record.outcome > *worst)) worst = r.record.outcome;
    if (worst && c.summary.pinned_outcome != worst)
      f["summary"]["pinned_outcome"].expected(fmt::format("'{}', the worst outcome of the runs at the pinned rate",
                                                          to_string(*worst)));
  }
}

CaseResult read_case(const JsonField& f) {
  CaseResult c;
  c.id = f["id"].string();
  c.problem = f["problem"].string();
  c.scaling = f["scaling"].string();
  c.problem_kind = f["problem_kind"].string();
  const JsonField opt = f["optimizer"];
  c.optimizer = optimizer_spec_from_json(opt.json(), opt.file(), opt.pointer());
  c.dataset = f["dataset"].string_or_empty();
  c.data_sha256 = f["data_sha256"].sha256();
  c.optimum_cost = f["optimum_cost"].number_or_missing();
  c.error = f["error"].string_or_empty();
  if (f.has("gate")) c.gate = gate_tolerances_from_json(f["gate"]);
  c.theory = read_theory(f["theory"]);
  c.summary = read_summary(f["summary"]);
  if (f.has("verification") && !f["verification"].is_null()) c.verification = read_verification(f["verification"]);
  if (f.has("wall_seconds")) c.wall_seconds = f["wall_seconds"].number_or_missing();  // timing only
  const JsonField runs = f["runs"];
  for (std::size_t i = 0; i < runs.array_size(); ++i) c.runs.push_back(read_run(runs[i]));
  check_summary_against_runs(c, f);
  return c;
}

}  // namespace

Results results_from_json(const json& j, const std::string& path) {
  const JsonField f(j, path);
  // The format first: a file of another format would fail somewhere less telling.
  if (const JsonField format = f["format"];
      !format.exists() || !format.json().is_string() || format.string() != kResultsFormat) {
    // Results are remade by running the suite; only baselines, which are accepted by hand,
    // are read in their earlier format.
    const bool earlier = format.exists() && format.json() == "stepgate.results/1";
    format.expected(std::string("format \"") + kResultsFormat + "\"" +
                (earlier ? " (these results were written by stepgate 0.1: run the suite again)" : ""));
  }
  Results r;
  r.format = kResultsFormat;
  const JsonField suite = f["suite"];
  r.suite = {suite["name"].string(), suite["path"].string(), suite["sha256"].sha256()};
  const JsonField tool = f["tool"];
  r.tool = {tool["version"].string(), tool["compiler"].string(), tool["build"].string()};
  const JsonField host = f["host"];
  r.host.os = host["os"].string();
  r.host.machine = host["machine"].string();
  r.host.hostname = host["hostname"].string();
  r.host.cores = host["cores"].integer_as<unsigned>();
  r.host.jobs = host["jobs"].integer_as<int>();
  if (host.has("kernels")) r.host.kernels = host["kernels"].string();  // absent before 0.1.0's kernel sets
  r.started = f["started"].string();
  r.finished = f["finished"].string();
  if (f.has("wall_seconds")) r.wall_seconds = f["wall_seconds"].number_or_missing();  // timing only
  if (f.has("shard") && !f["shard"].is_null()) r.shard = f["shard"].string();
  if (f.has("plan_cases")) {
    const JsonField ids = f["plan_cases"];
    for (std::size_t i = 0; i < ids.array_size(); ++i) r.plan_cases.push_back(ids[i].string());
  }
  if (f.has("gate")) r.gate = gate_tolerances_from_json(f["gate"]);
  if (f.has("datasets")) {
    const JsonField datasets = f["datasets"];
    for (std::size_t i = 0; i < datasets.array_size(); ++i) {
      const JsonField d = datasets[i];
      DatasetInfo info;
      info.name = d["name"].string();
      info.source = d["source"].string();
      info.sha256 = d["sha256"].sha256();
      info.rows = d["rows"].integer_as<long>();
      info.columns = d["columns"].integer_as<long>();
      if (d.has("produce") && !d["produce"].is_null()) {
        const JsonField p = d["produce"];
        const JsonField argv = p["argv"];
        for (std::size_t k = 0; k < argv.array_size(); ++k) info.produced_by.push_back(argv[k].string());
        info.produced_in = p["cwd"].string();
      }
      const JsonField stats = d["stats"];
      for (std::size_t k = 0; k < stats.array_size(); ++k)
        info.stats.push_back({stats[k]["name"].string(), stats[k]["mean"].number_or_missing(),
                              stats[k]["sd_population"].number_or_missing()});
      r.datasets.push_back(std::move(info));
    }
  }
  const JsonField cases = f["cases"];
  std::set<std::string> ids;
  for (std::size_t i = 0; i < cases.array_size(); ++i) {
    r.cases.push_back(read_case(cases[i]));
    if (!ids.insert(r.cases.back().id).second)
      cases[i]["id"].expected(fmt::format("each case id once (the case '{}' is given twice)", r.cases.back().id));
  }
  return r;
}

}  // namespace stepgate
