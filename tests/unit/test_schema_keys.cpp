// The JSON Schema of suites (suites/schema/suite.schema.json, for editors) names the same keys
// as the tables the suite reader checks against: one declaration in the code, and a test that
// the schema has not drifted from it.
#include <catch2/catch.hpp>

#include <algorithm>
#include <fstream>
#include <set>
#include <string>

#include <nlohmann/json.hpp>

#include "stepgate/core/gate_tolerances.hpp"
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
