// The baseline file: stepgate.baseline/2 round-trips, and a baseline of stepgate 0.1
// (stepgate.baseline/1: host facts under "platform", "" for a missing hash) is still read.
#include <catch2/catch.hpp>
#include <nlohmann/json.hpp>

#include "stepgate/core/error.hpp"
#include "stepgate/gate/baseline.hpp"

using namespace stepgate;
using nlohmann::json;

namespace {

json v2_case() {
  return {{"id", "bowl/none/gd"}, {"data_sha256", nullptr}, {"floor", 0.001}, {"edge", 1.9},
          {"edge_bracket", {1.9, 1.92}}, {"blowup", 2.0}, {"best_rate", 1.0}, {"best_iterations", 12.0},
          {"pinned", 0.5}, {"pinned_iterations", 40.0}, {"headroom", 3.8}, {"min_lre", nullptr},
          {"edge_spread", 1.0}, {"precision", 0.01}, {"predicted_blowup", 2.0}, {"ragged_top", nullptr},
          {"edge_seed", 2}, {"floor_seed", nullptr}};
}

json v2_baseline() {
  return {{"format", "stepgate.baseline/2"},
          {"suite", {{"name", "s"}, {"path", "s.json"}, {"sha256", std::string(64, 'a')}}},
          {"tool", {{"version", "0.2.0"}, {"compiler", "GCC 12.2.0"}, {"build", "Release, Eigen 3.4.0"}}},
          {"host", {{"os", "Linux"}, {"machine", "x86_64"}, {"cores", 2}, {"kernels", "portable"}}},
          {"accepted", "2026-12-03T06:00:00Z"},
          {"results_started", "2026-12-03T05:59:00Z"},
          {"cases", json::array({v2_case()})}};
}

}  // namespace

TEST_CASE("baseline: format 2 writes host facts under host and null for no hash", "[baseline]") {
  const Baseline b = baseline_from_json(v2_baseline(), "b.json");
  CHECK(b.host.cores == 2);
  CHECK(b.host.kernels == "portable");
  REQUIRE(b.cases.size() == 1);
  CHECK(b.cases[0].data_sha256.empty());
  CHECK(b.cases[0].edge == 1.9);
  const json again = to_json(b);
  CHECK(again["format"] == "stepgate.baseline/2");
  CHECK(again.contains("host"));
  CHECK_FALSE(again.contains("platform"));
  CHECK(again["cases"][0]["data_sha256"].is_null());
  CHECK(again == v2_baseline());
  CHECK(b.cases[0].edge_seed == std::optional<std::uint64_t>(2));
  CHECK_FALSE(b.cases[0].floor_seed.has_value());
}

TEST_CASE("baseline: a baseline without the boundary seeds (before verify mode) is read without them", "[baseline]") {
  json old = v2_baseline();
  old["cases"][0].erase("edge_seed");
  old["cases"][0].erase("floor_seed");
  const Baseline b = baseline_from_json(old, "b.json");
  CHECK_FALSE(b.cases[0].edge_seed.has_value());
  json bad = v2_baseline();
  bad["cases"][0]["edge_seed"] = -1;
  try {
    baseline_from_json(bad, "b.json");
    FAIL("a negative seed was read");
  } catch (const InputError& e) {
    CHECK_THAT(e.text(), Catch::Contains("b.json#/cases/0/edge_seed"));
  }
}

TEST_CASE("baseline: a baseline of stepgate 0.1 is still read", "[baseline]") {
  json v1 = v2_baseline();
  v1["format"] = "stepgate.baseline/1";
  v1["platform"] = v1["host"];
  v1.erase("host");
  v1["cases"][0]["data_sha256"] = "";
  v1["cases"][0]["reference_digits"] = 7.5;
  v1["cases"][0].erase("min_lre");
  const Baseline b = baseline_from_json(v1, "old.json");
  CHECK(b.host.machine == "x86_64");
  CHECK(b.cases[0].data_sha256.empty());
  CHECK(b.cases[0].min_lre == 7.5);
  json expected = v2_baseline();
  expected["cases"][0]["min_lre"] = 7.5;
  expected["cases"][0]["edge_seed"] = 2;
  CHECK(to_json(b) == expected);  // written again, it is format 2

  // Format 1 keeps its own key: "host" in a format 1 file is not read as the host facts.
  json mixed = v2_baseline();
  mixed["format"] = "stepgate.baseline/1";
  try {
    baseline_from_json(mixed, "mixed.json");
    FAIL("a format 1 baseline without platform was read");
  } catch (const InputError& e) {
    CHECK_THAT(e.text(), Catch::Contains("mixed.json#/platform"));
  }
}

TEST_CASE("baseline: other formats are refused naming both that are read", "[baseline]") {
  json other = v2_baseline();
  other["format"] = "stepgate.baseline/9";
  try {
    baseline_from_json(other, "b.json");
    FAIL("format 9 was read");
  } catch (const InputError& e) {
    CHECK_THAT(e.text(), Catch::Contains("b.json#/format"));
    CHECK_THAT(e.message(), Catch::Contains("stepgate.baseline/2"));
    CHECK_THAT(e.message(), Catch::Contains("stepgate.baseline/1"));
  }
  json bad_hash = v2_baseline();
  bad_hash["cases"][0]["data_sha256"] = 5;
  CHECK_THROWS_WITH(baseline_from_json(bad_hash, "b.json"), Catch::Contains("or null"));
}

TEST_CASE("baseline: a case keeps the whole safe range of its summary, and writes it back", "[baseline]") {
  Results r;
  CaseResult c;
  c.id = "a/none/gd";
  // Distinct values that obey the range checks (headroom = edge / pinned, floor <= edge, ...).
  const double values[] = {0.01, 0.5, 0.8, 0.3, 100, 0.25, 120, 2.0, 1.2, 0.1};
  REQUIRE(safe_range_fields().size() == std::size(values));
  for (std::size_t i = 0; i < std::size(values); ++i) c.summary.*safe_range_fields()[i].member = values[i];
  c.summary.edge_lo = 0.5, c.summary.edge_hi = 0.51, c.summary.ragged_top = 0.6;
  c.theory.predicted_blowup = 0.8;
  r.cases = {c};
  const Baseline b = baseline_from_results(r, "2026-12-03T06:00:00Z");
  REQUIRE(b.cases.size() == 1);
  const BaselineCase& x = b.cases[0];
  for (const SafeRangeField& f : safe_range_fields()) {
    INFO(f.key);
    CHECK(x.*f.member == c.summary.*f.member);
  }
  CHECK(x.edge_lo == 0.5);
  CHECK(x.edge_hi == 0.51);
  CHECK(x.ragged_top == 0.6);
  CHECK(x.predicted_blowup == 0.8);
  // Written and read again, every field survives.
  const Baseline again = baseline_from_json(to_json(b), "b.json");
  for (const SafeRangeField& f : safe_range_fields()) CHECK(again.cases[0].*f.member == x.*f.member);
  CHECK(again.cases[0].ragged_top == 0.6);
  CHECK(again.cases[0].edge_hi == 0.51);
  // The results' summary writes the same keys for the same fields.
  const json results = to_json(r);
  for (const SafeRangeField& f : safe_range_fields())
    CHECK(results["cases"][0]["summary"][std::string(f.key)] == to_json(b)["cases"][0][std::string(f.key)]);
}
