// The JSON Schema of suites (suites/schema/suite.schema.json, for editors) names the same keys
// as the tables the suite reader checks against: one declaration in the code, and a test that
// the schema has not drifted from it.
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <limits>
#include <fstream>
#include <set>
#include <string>

#include <nlohmann/json.hpp>

#include "stepgate/core/gate_tolerances.hpp"
#include "stepgate/core/optimizer_spec.hpp"
#include "stepgate/core/rate_policy.hpp"
#include "stepgate/core/run_settings.hpp"
#include "stepgate/gate/findings.hpp"
#include "stepgate/suite/suite_sections.hpp"

using namespace stepgate;

namespace {

nlohmann::json schema() {
  std::ifstream in(std::string(STEPGATE_SOURCE_DIR) + "/suites/schema/suite.schema.json");
  REQUIRE(in);
  return nlohmann::json::parse(in);
}

std::set<std::string> schema_keys(const nlohmann::json& s, const std::string& def) {
  std::set<std::string> keys;
  for (const auto& [key, value] : s.at("$defs").at(def).at("properties").items()) keys.insert(key);
  return keys;
}

std::set<std::string> as_set(const std::vector<std::string>& v) { return {v.begin(), v.end()}; }

// The range the schema gives a number: minimum / exclusiveMinimum, maximum / exclusiveMaximum,
// and "integer" for whole numbers.
Range schema_range(const nlohmann::json& property) {
  Range r;
  if (property.contains("minimum")) r.min = property["minimum"].get<double>();
  if (property.contains("exclusiveMinimum")) r.min = property["exclusiveMinimum"].get<double>(), r.min_open = true;
  if (property.contains("maximum")) r.max = property["maximum"].get<double>();
  if (property.contains("exclusiveMaximum")) r.max = property["exclusiveMaximum"].get<double>(), r.max_open = true;
  r.whole = property.value("type", "") == "integer";
  return r;
}

// One key's range in the schema's definition `def` equals the table's.
void check_range(const nlohmann::json& s, const std::string& def, std::string_view key, const Range& table) {
  INFO(def << "." << key);
  const nlohmann::json& property = s.at("$defs").at(def).at("properties").at(std::string(key));
  const Range r = schema_range(property);
  CHECK(r.min == table.min);
  CHECK(r.max == table.max);
  // An infinite bound is open in the table and absent from the schema.
  CHECK((r.min_open || std::isinf(r.min)) == (table.min_open || std::isinf(table.min)));
  CHECK((r.max_open || std::isinf(r.max)) == (table.max_open || std::isinf(table.max)));
  CHECK(r.whole == table.whole);
  CHECK(property.value("type", "") == (table.whole ? "integer" : "number"));
}

template <class S>
void check_ranges(const nlohmann::json& s, const std::string& def, const std::vector<SettingField<S>>& fields) {
  for (const SettingField<S>& f : fields) {
    if (f.is_flag()) {
      INFO(def << "." << f.key);
      CHECK(s.at("$defs").at(def).at("properties").at(std::string(f.key)).value("type", "") == "boolean");
    } else {
      check_range(s, def, f.key, f.range);
    }
  }
}

}  // namespace

TEST_CASE("schema: the keys of gate, settings, rates and outcome equal the reader's tables", "[suite]") {
  const nlohmann::json s = schema();
  CHECK(schema_keys(s, "gate") == as_set(gate_keys()));
  CHECK(schema_keys(s, "settings_properties") == as_set(suite_detail::settings_keys()));
  CHECK(schema_keys(s, "rates") == as_set(suite_detail::rate_keys()));
  CHECK(schema_keys(s, "outcome") == as_set(suite_detail::outcome_keys()));
  CHECK(schema_keys(s, "optimizer") == as_set(suite_detail::optimizer_keys()));
  CHECK(schema_keys(s, "schedule") == as_set(suite_detail::schedule_keys()));
  // The kinds the schema allows are the kinds the code knows.
  std::set<std::string> kinds, schedule_kinds;
  for (const auto& k : s.at("$defs").at("optimizer").at("properties").at("kind").at("enum")) kinds.insert(k.get<std::string>());
  for (const auto& k : s.at("$defs").at("schedule").at("properties").at("kind").at("enum"))
    schedule_kinds.insert(k.get<std::string>());
  CHECK(kinds == as_set(optimizer_kind_names()));
  CHECK(schedule_kinds == as_set(schedule_kind_names()));
  std::set<std::string> samplings;
  for (const auto& k : s.at("$defs").at("optimizer").at("properties").at("sampling").at("enum"))
    samplings.insert(k.get<std::string>());
  CHECK(samplings == as_set(batch_sampling_names()));
  // Each gate tolerance is named as its rule, or is one of the documented pairs.
  for (const std::string& key : gate_keys()) {
    INFO(key);
    const bool pair = key == "theory_slack" || key == "case_added" || key == "case_missing";
    std::set<std::string> rules;
    for (Rule r : {Rule::edge_moved, Rule::floor_moved, Rule::best_moved, Rule::pinned_headroom, Rule::pinned_iterations,
                   Rule::min_lre, Rule::theory, Rule::case_presence, Rule::data_changed})
      rules.emplace(to_string(r));
    CHECK((pair || rules.count(key) == 1));
  }
  // The old names are not in the schema either.
  for (const auto& [old_key, key] : renamed_gate_keys()) CHECK(schema_keys(s, "gate").count(std::string(old_key)) == 0);
}

TEST_CASE("schema: each number's range equals the range in the code's tables", "[suite]") {
  const nlohmann::json s = schema();
  check_ranges(s, "rates", rate_fields());
  check_ranges(s, "grid", grid_fields());
  check_ranges(s, "outcome", outcome_fields());
  check_ranges(s, "settings_properties", run_fields());
  for (const ToleranceField& f : tolerance_fields()) check_range(s, "gate", f.key, f.range);
  for (const OptimizerParam& p : optimizer_params()) check_range(s, "optimizer", p.key, p.range);
  for (const ScheduleParam& p : schedule_params()) check_range(s, "schedule", p.key, p.range);
}

TEST_CASE("ranges: bounds, open ends, whole numbers and their words", "[suite]") {
  CHECK(Range::half_open(0, 1).admits(0));
  CHECK_FALSE(Range::half_open(0, 1).admits(1));
  CHECK(Range::half_open(0, 1).words() == "in [0, 1)");
  CHECK(Range::above(0).expected() == "a number > 0");
  CHECK_FALSE(Range::above(0).admits(0));
  CHECK(Range::at_least(1).expected() == "a number >= 1");
  CHECK(Range::open_closed(0, 1).words() == "in (0, 1]");
  CHECK(Range::count_in(1, 16).expected() == "a whole number in 1..16");
  CHECK_FALSE(Range::count_in(1, 16).admits(2.5));
  CHECK(Range::count_at_least(0).expected() == "a whole number >= 0");
  CHECK(Range::any().expected() == "a number");
  for (const Range& r : {Range::any(), Range::at_least(0), Range::closed(0, 17)}) {
    CHECK_FALSE(r.admits(std::numeric_limits<double>::quiet_NaN()));
    CHECK_FALSE(r.admits(std::numeric_limits<double>::infinity()));
  }
}

TEST_CASE("validate: settings a library caller builds are checked as a suite's are", "[suite]") {
  RatePolicy rates;
  CHECK(validate(rates).empty());
  rates.lanes = 0;
  rates.grid->to = rates.grid->from;
  rates.fixed = {-1.0};
  const std::string r = validate(rates);
  CHECK_THAT(r, Catch::Contains("lanes = 0, expected a whole number in 1..16"));
  CHECK_THAT(r, Catch::Contains("expected from < to"));
  CHECK_THAT(r, Catch::Contains("fixed rate -1, expected a rate > 0"));
  rates = RatePolicy{};
  rates.grid.reset();
  CHECK_THAT(validate(rates), Catch::Contains("no grid and no fixed rates"));

  RunSettings run;
  CHECK(validate(run).empty());
  run.budget = 0;
  run.outcome.blowup_factor = 1.0;
  run.outcome.criterion = Criterion::cost;
  const std::string v = validate(run);
  CHECK_THAT(v, Catch::Contains("budget = 0, expected a whole number in 1..1000000000"));
  CHECK_THAT(v, Catch::Contains("outcome: blowup_factor = 1, expected a number > 1"));
  CHECK_THAT(v, Catch::Contains("criterion 'cost' without a target"));
  run = RunSettings{};
  run.outcome.tol = std::numeric_limits<double>::quiet_NaN();  // unset: the criterion's default
  CHECK(validate(run).empty());
  run.eval_every = run.budget + 1;
  CHECK_THAT(validate(run), Catch::Contains("above the budget"));
}
