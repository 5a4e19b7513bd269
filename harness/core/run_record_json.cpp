#include "stepgate/core/run_record_json.hpp"

#include <cmath>

#include <fmt/format.h>
#include <limits>

namespace stepgate {

using nlohmann::json;

json number_json(double x, const RunRecordStyle& style) {
  if (!style.exact || std::isnan(x)) return finite_or_null(x);
  if (std::isinf(x)) return x > 0 ? "inf" : "-inf";
  return x;  // nlohmann writes the shortest form that reads back exactly
}

double number_from_json(const JsonField& f, const RunRecordStyle& style) {
  if (style.exact && f.exists() && f.json().is_string()) {
    const std::string& s = f.string();
    if (s == "inf") return std::numeric_limits<double>::infinity();
    if (s == "-inf") return -std::numeric_limits<double>::infinity();
    f.expected("a number, null, \"inf\" or \"-inf\"");
  }
  return f.number_or_missing();
}

const std::vector<NumberField<RunRecord>>& run_number_fields() {
  using R = RunRecord;
  static const std::vector<NumberField<R>> fields = {
      {"rate", &R::rate}, {"overshoot", &R::overshoot}, {"noise", &R::noise}, {"wall_seconds", &R::wall_seconds}};
  return fields;
}

const std::vector<CountField<RunRecord>>& run_count_fields() {
  using R = RunRecord;
  static const std::vector<CountField<R>> fields = {
      {"seed_index", &R::seed_index}, {"steps", &R::steps}, {"log_lines", &R::log_lines}};
  return fields;
}

json to_json(const RunRecord& r, const RunRecordStyle& style) {
  json j = json::object();
  for (const auto& f : run_number_fields()) j[std::string(f.key)] = number_json(r.*f.member, style);
  for (const auto& f : run_count_fields()) j[std::string(f.key)] = r.*f.member;
  j["rng_seed"] = r.seed;
  j["outcome"] = to_string(r.outcome);
  j["reason"] = text_or_null(r.reason);
  // The iteration of convergence: null unless converged.
  j["converged_at"] = r.outcome == Outcome::converged && r.iterations ? json(*r.iterations) : json(nullptr);
  j["confirmation"] = r.confirmation ? json{{"method", r.confirmation->method},
                                            {"until", r.confirmation->until},
                                            {"probe_growth", number_json(r.confirmation->probe_growth, style)}}
                                     : json(nullptr);
  json trace = json::array();
  for (std::size_t i : thinned_indices(r.trace, style.thinning)) {
    const TracePoint& p = r.trace[i];
    trace.push_back(style.full_trace ? json::array({p.iter, number_json(p.cost, style), number_json(p.gap, style),
                                                     number_json(p.grad_norm, style)})
                                     : json::array({p.iter, number_json(p.cost, style)}));
  }
  j["trace"] = std::move(trace);
  // A failed command run's evidence: only where there is some (most runs have none).
  if (!r.stderr_tail.empty()) j["stderr"] = r.stderr_tail;
  if (!r.command.empty()) j["command"] = r.command;
  if (!r.request.empty()) j["request"] = r.request;
  if (style.final_params && r.final_params.size() > 0) {
    json params = json::array();
    for (Index i = 0; i < r.final_params.size(); ++i) params.push_back(number_json(r.final_params[i], style));
    j["final_params"] = std::move(params);
  }
  return j;
}

RunRecord run_record_from(const JsonField& f, const RunRecordStyle& style) {
  RunRecord r;
  for (const auto& field : run_number_fields()) r.*field.member = number_from_json(f[field.key], style);
  for (const auto& field : run_count_fields()) r.*field.member = f[field.key].integer_as<long>();
  r.seed = f["rng_seed"].integer_as<std::uint64_t>();
  const JsonField outcome = f["outcome"];
  const auto o = outcome_from_string(outcome.string());
  if (!o) outcome.expected("an outcome (converged, slow, oscillating, diverged, failed)");
  r.outcome = *o;
  r.reason = f["reason"].string_or_empty();
  if (const JsonField at = f["converged_at"]; !at.is_null()) r.iterations = at.integer_as<long>();
  if (const JsonField c = f["confirmation"]; !c.is_null())
    r.confirmation = Confirmation{c["method"].string(), c["until"].integer_as<long>(),
                                  number_from_json(c["probe_growth"], style)};
  const JsonField trace = f["trace"];
  const std::size_t columns = style.full_trace ? 4 : 2;
  r.trace.resize(trace.array_size());
  for (std::size_t i = 0; i < r.trace.size(); ++i) {
    const JsonField point = trace[i];
    if (point.array_size() != columns)
      point.expected(style.full_trace ? "a point [iteration, cost, gap, gradient norm]" : "a pair [iteration, cost]");
    TracePoint& p = r.trace[i];
    p.iter = point[0].integer_as<long>();
    p.cost = number_from_json(point[1], style);
    if (style.full_trace) p.gap = number_from_json(point[2], style), p.grad_norm = number_from_json(point[3], style);
  }
  if (const JsonField e = f["stderr"]; e.exists() && !e.is_null()) r.stderr_tail = e.string();
  if (const JsonField cmd = f["command"]; cmd.exists() && !cmd.is_null())
    for (std::size_t i = 0; i < cmd.array_size(); ++i) r.command.push_back(cmd[i].string());
  if (const JsonField q = f["request"]; q.exists() && !q.is_null()) r.request = q.string();
  if (const JsonField params = f["final_params"]; params.exists() && !params.is_null()) {
    r.final_params.resize(static_cast<Index>(params.array_size()));
    for (std::size_t i = 0; i < params.array_size(); ++i) r.final_params[static_cast<Index>(i)] = number_from_json(params[i], style);
  }
  // Values that cannot be: refused where they are, not trusted.
  if (!(std::isfinite(r.rate) && r.rate > 0.0)) f["rate"].expected("a rate > 0");
  if (r.steps < 0) f["steps"].expected("a number of iterations >= 0");
  if (r.outcome == Outcome::converged && !r.iterations)
    f["converged_at"].expected("the iteration it converged at (a converged run has one)");
  if (r.iterations && (*r.iterations < 0 || *r.iterations > r.steps))
    f["converged_at"].expected(fmt::format("an iteration from 0 to the run's steps ({})", r.steps));
  return r;
}

}  // namespace stepgate
