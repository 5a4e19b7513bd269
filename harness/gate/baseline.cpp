#include "stepgate/gate/baseline.hpp"

#include <fmt/format.h>

#include "stepgate/core/error.hpp"
#include "stepgate/core/json_fields.hpp"

namespace stepgate {

using nlohmann::json;

const BaselineCase* Baseline::find(const std::string& id) const {
  for (const BaselineCase& c : cases)
    if (c.id == id) return &c;
  return nullptr;
}

Baseline baseline_from_results(const Results& r, const std::string& accepted_at) {
  Baseline b;
  b.suite = r.suite;
  b.tool = r.tool;
  b.platform = r.host;
  b.accepted = accepted_at;
  b.results_started = r.started;
  for (const CaseResult& c : r.cases) {
    if (!c.error.empty()) continue;
    const CaseSummary& s = c.summary;
    BaselineCase x;
    x.id = c.id;
    x.data_sha256 = c.data_sha256;
    x.floor = s.floor;
    x.edge = s.edge;
    x.edge_lo = s.edge_lo;
    x.edge_hi = s.edge_hi;
    x.blowup = s.blowup;
    x.best_rate = s.best_rate;
    x.best_iterations = s.best_iterations;
    x.pinned = s.pinned;
    x.pinned_iterations = s.pinned_iterations;
    x.headroom = s.headroom;
    x.reference_digits = s.reference ? s.reference->lre_min : kMissing;
    x.edge_spread = s.edge_spread;
    x.precision = s.precision;
    x.predicted_blowup = c.theory.predicted_blowup;
    x.ragged_top = s.ragged_top;
    b.cases.push_back(std::move(x));
  }
  return b;
}

json to_json(const Baseline& b) {
  json cases = json::array();
  for (const BaselineCase& c : b.cases)
    cases.push_back({{"id", c.id},
                     {"data_sha256", c.data_sha256},
                     {"floor", finite_or_null(c.floor)},
                     {"edge", finite_or_null(c.edge)},
                     {"edge_bracket", {finite_or_null(c.edge_lo), finite_or_null(c.edge_hi)}},
                     {"blowup", finite_or_null(c.blowup)},
                     {"best_rate", finite_or_null(c.best_rate)},
                     {"best_iterations", finite_or_null(c.best_iterations)},
                     {"pinned", finite_or_null(c.pinned)},
                     {"pinned_iterations", finite_or_null(c.pinned_iterations)},
                     {"headroom", finite_or_null(c.headroom)},
                     {"reference_digits", finite_or_null(c.reference_digits)},
                     {"edge_spread", finite_or_null(c.edge_spread)},
                     {"precision", finite_or_null(c.precision)},
                     {"predicted_blowup", finite_or_null(c.predicted_blowup)},
                     {"ragged_top", finite_or_null(c.ragged_top)}});
  return {{"format", kBaselineFormat},
          {"suite", {{"name", b.suite.name}, {"path", b.suite.path}, {"sha256", b.suite.sha256}}},
          {"tool", {{"version", b.tool.version}, {"compiler", b.tool.compiler}, {"build", b.tool.build}}},
          {"platform", {{"os", b.platform.os}, {"machine", b.platform.machine}, {"cores", b.platform.cores},
                        {"kernels", b.platform.kernels}}},
          {"accepted", b.accepted},
          {"results_started", b.results_started},
          {"cases", std::move(cases)}};
}

Baseline baseline_from_json(const json& j, const std::string& path) {
  const JsonField f(j, path);
  Baseline b;
  const JsonField format = f["format"];
  if (format.string() != kBaselineFormat) format.fail(std::string("\"") + kBaselineFormat + "\"");
  const JsonField suite = f["suite"];
  b.suite = {suite["name"].string(), suite["path"].string(), suite["sha256"].sha256()};
  const JsonField tool = f["tool"];
  b.tool = {tool["version"].string(), tool["compiler"].string(), tool["build"].string()};
  const JsonField platform = f["platform"];
  b.platform.os = platform["os"].string();
  b.platform.machine = platform["machine"].string();
  b.platform.cores = platform["cores"].integer<unsigned>();
  if (platform.has("kernels")) b.platform.kernels = platform["kernels"].string();
  b.accepted = f["accepted"].string();
  b.results_started = f["results_started"].string();
  const JsonField cases = f["cases"];
  for (std::size_t i = 0; i < cases.array_size(); ++i) {
    const JsonField c = cases[i];
    BaselineCase x;
    x.id = c["id"].string();
    for (const BaselineCase& earlier : b.cases)
      if (earlier.id == x.id) c["id"].fail(fmt::format("each case id once (the case '{}' is given twice)", x.id));
    x.data_sha256 = c["data_sha256"].sha256();
    x.floor = c["floor"].number_or_missing();
    x.edge = c["edge"].number_or_missing();
    const JsonField bracket = c["edge_bracket"];
    if (bracket.array_size() != 2) bracket.fail("[lo, hi]");
    x.edge_lo = bracket[0].number_or_missing();
    x.edge_hi = bracket[1].number_or_missing();
    x.blowup = c["blowup"].number_or_missing();
    x.best_rate = c["best_rate"].number_or_missing();
    x.best_iterations = c["best_iterations"].number_or_missing();
    x.pinned = c["pinned"].number_or_missing();
    x.pinned_iterations = c["pinned_iterations"].number_or_missing();
    x.headroom = c["headroom"].number_or_missing();
    x.reference_digits = c["reference_digits"].number_or_missing();
    x.edge_spread = c["edge_spread"].number_or_missing();
    x.precision = c["precision"].number_or_missing();
    x.predicted_blowup = c["predicted_blowup"].number_or_missing();
    if (c.has("ragged_top")) x.ragged_top = c["ragged_top"].number_or_missing();  // absent before 0.2
    b.cases.push_back(std::move(x));
  }
  return b;
}

void require_same_suite(const Results& results, const Baseline& baseline, const std::string& baseline_path) {
  if (baseline.suite.name != results.suite.name)
    throw InputError(baseline_path + "#/suite/name",
                     fmt::format("is the baseline of the suite '{}', not of '{}'; expected the baseline accepted for the "
                                 "suite of these results", baseline.suite.name, results.suite.name));
}

Baseline read_baseline(const std::string& path) { return baseline_from_json(read_json_file(path), path); }

}  // namespace stepgate
