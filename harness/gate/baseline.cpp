#include "stepgate/gate/baseline.hpp"

#include <cmath>
#include <utility>

#include <fmt/format.h>

#include "stepgate/core/safe_range_check.hpp"

#include "stepgate/core/error.hpp"
#include "stepgate/core/json_node.hpp"

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
  b.host = r.host;
  b.accepted = accepted_at;
  b.results_started = r.started;
  for (const CaseResult& c : r.cases) {
    if (!c.error.empty()) continue;
    const CaseSummary& s = c.summary;
    BaselineCase x;
    static_cast<SafeRange&>(x) = s;  // the whole safe range, field by field
    x.id = c.id;
    x.data_sha256 = c.data_sha256;
    x.min_lre = s.reference ? s.reference->min_lre : kMissing;
    x.predicted_blowup = c.theory.predicted_blowup;
    if (!std::isnan(s.edge))
      for (const SeedSummary& seed : s.seeds) {  // the first seed at the case's edge, and at its floor
        if (!x.edge_seed && seed.edge == s.edge) x.edge_seed = seed.seed;
        if (!x.floor_seed && seed.floor == s.floor) x.floor_seed = seed.seed;
      }
    b.cases.push_back(std::move(x));
  }
  return b;
}

json to_json(const Baseline& b) {
  json cases = json::array();
  for (const BaselineCase& c : b.cases) {
    json x = {{"id", c.id},
              {"data_sha256", text_or_null(c.data_sha256)},
              {"edge_bracket", {finite_or_null(c.edge_lo), finite_or_null(c.edge_hi)}},
              {"min_lre", finite_or_null(c.min_lre)},
              {"predicted_blowup", finite_or_null(c.predicted_blowup)},
              {"ragged_top", finite_or_null(c.ragged_top)},
              {"edge_seed", c.edge_seed ? json(*c.edge_seed) : json(nullptr)},
              {"floor_seed", c.floor_seed ? json(*c.floor_seed) : json(nullptr)}};
    for (const SafeRangeField& f : safe_range_fields()) x[std::string(f.key)] = finite_or_null(c.*f.member);
    cases.push_back(std::move(x));
  }
  return {{"format", kBaselineFormat},
          {"suite", {{"name", b.suite.name}, {"path", b.suite.path}, {"sha256", b.suite.sha256}}},
          {"tool", {{"version", b.tool.version}, {"compiler", b.tool.compiler}, {"build", b.tool.build}}},
          {"host", {{"os", b.host.os}, {"machine", b.host.machine}, {"cores", b.host.cores},
                    {"kernels", b.host.kernels}}},
          {"accepted", b.accepted},
          {"results_started", b.results_started},
          {"cases", std::move(cases)}};
}

Baseline baseline_from_json(const json& j, const std::string& path) {
  const JsonField f(j, path);
  Baseline b;
  const JsonField format = f["format"];
  const bool v1 = format.exists() && format.json() == kBaselineFormatV1;
  if (!v1 && format.string() != kBaselineFormat)
    format.expected(fmt::format("\"{}\" (or \"{}\" of stepgate 0.1)", kBaselineFormat, kBaselineFormatV1));
  const JsonField suite = f["suite"];
  b.suite = {suite["name"].string(), suite["path"].string(), suite["sha256"].sha256()};
  const JsonField tool = f["tool"];
  b.tool = {tool["version"].string(), tool["compiler"].string(), tool["build"].string()};
  const JsonField host = f[v1 ? "platform" : "host"];
  b.host.os = host["os"].string();
  b.host.machine = host["machine"].string();
  b.host.cores = host["cores"].integer_as<unsigned>();
  if (host.has("kernels")) b.host.kernels = host["kernels"].string();
  b.accepted = f["accepted"].string();
  b.results_started = f["results_started"].string();
  const JsonField cases = f["cases"];
  for (std::size_t i = 0; i < cases.array_size(); ++i) {
    const JsonField c = cases[i];
    BaselineCase x;
    x.id = c["id"].string();
    for (const BaselineCase& earlier : b.cases)
      if (earlier.id == x.id) c["id"].expected(fmt::format("each case id once (the case '{}' is given twice)", x.id));
    x.data_sha256 = c["data_sha256"].sha256();
    for (const SafeRangeField& f : safe_range_fields()) x.*f.member = c[std::string(f.key)].number_or_missing();
    const JsonField bracket = c["edge_bracket"];
    if (bracket.array_size() != 2) bracket.expected("[lo, hi]");
    x.edge_lo = bracket[0].number_or_missing();
    x.edge_hi = bracket[1].number_or_missing();
    x.min_lre = c[v1 ? "reference_digits" : "min_lre"].number_or_missing();
    x.predicted_blowup = c["predicted_blowup"].number_or_missing();
    if (c.has("ragged_top")) x.ragged_top = c["ragged_top"].number_or_missing();  // absent before 0.2
    check_safe_range(x, c, "ragged_top");
    for (auto [key, member] : {std::pair{"edge_seed", &BaselineCase::edge_seed}, std::pair{"floor_seed", &BaselineCase::floor_seed}})
      if (c.has(key) && !c[key].is_null()) x.*member = c[key].seed();  // absent before verify mode
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
