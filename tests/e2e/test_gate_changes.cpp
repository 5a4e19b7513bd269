// Changes that the gate must catch (and one it must let through), on the plant suite
// (tests/e2e/suites/plant.json): least squares on tests/e2e/data/plant.csv without scaling,
// gd pinned about 3x below the edge, and a quadratic with heavy-ball momentum.
//
// tests/e2e/data/plant.csv is invented fixture data, made once for these tests and committed:
// 300 rows of four process readings (temp_dev, pressure_dev, flow_dev, valve_m: the valve travel
// in metres, a small number) and output = 40 + 3 temp − 1.2 pressure + 2.5 flow + 0.5 valve +
// noise (σ 0.05). It stands for no real plant.
#include <fmt/format.h>

#include <cmath>
#include <pugixml.hpp>
#include <sstream>
#include <string>
#include <vector>

#include "e2e_fixtures.hpp"

using namespace stepgate::e2e;

namespace {

const char* const kPlantCase = "plant-ls/none/gd";
const char* const kBowlCase = "bowl-hb/none/hb";

// The plant data with the valve travel in millimetres instead of metres (×1000).
std::string plant_in_millimetres() {
  std::istringstream in(read_text(plant_csv()));
  std::string line, out;
  std::getline(in, line);
  REQUIRE(line == "temp_dev,pressure_dev,flow_dev,valve_m,output");
  out = "temp_dev,pressure_dev,flow_dev,valve_m,output\n";  // same header: only the unit changed
  int rows = 0;
  while (std::getline(in, line)) {
    std::vector<std::string> cells;
    std::stringstream row(line);
    for (std::string cell; std::getline(row, cell, ',');) cells.push_back(cell);
    REQUIRE(cells.size() == 5);
    cells[3] = fmt::format("{:.3f}", std::stod(cells[3]) * 1000.0);
    out += fmt::format("{},{},{},{},{}\n", cells[0], cells[1], cells[2], cells[3], cells[4]);
    ++rows;
  }
  REQUIRE(rows == 300);
  return out;
}

// Runs an edited copy of the plant suite (and data) gated against the accepted plant run.
struct GatedRun {
  CliResult cli;
  json results;
  std::string report_md;
  fs::path out;
};
GatedRun run_plant_variant(const TempDir& tmp, const std::string& suite_text, const std::string& csv_text,
                           int expected_exit) {
  const fs::path baseline = plant_baseline();
  const fs::path suite = plant_copy(tmp.path(), suite_text, csv_text);
  GatedRun g;
  g.out = tmp / "out";
  g.cli = expect_exit("run " + quoted(suite.string()) + " --quiet --baseline " + quoted(baseline.string()) + " --out " +
                          quoted(g.out.string()),
                      tmp.path(), expected_exit);
  report_time("gated plant variant", g.cli.seconds);
  g.results = read_json(g.out / "results.json");
  g.report_md = read_text(g.out / "report.md");
  return g;
}

std::string fmt4(double v) { return fmt::format("{:.4g}", v); }

}  // namespace

TEST_CASE("gate: the plant baseline itself is healthy", "[e2e]") {
  REQUIRE(plant_first().cli.exit_code == 0);
  const json base = read_json(plant_first().results());
  const json& s = case_of(base, kPlantCase).at("summary");
  REQUIRE(s.at("edge").is_number());
  REQUIRE(s.at("floor").is_number());
  // The pinned rate sits well inside the safe range: about 3x below the edge.
  CHECK(s.at("pinned").get<double>() >= s.at("floor").get<double>());
  CHECK(s.at("headroom").get<double>() > 2.5);
  CHECK(s.at("pinned_outcome") == "converged");
  const json& hb = case_of(base, kBowlCase).at("summary");
  CHECK(hb.at("headroom").get<double>() >= 1.5);
  CHECK(hb.at("pinned_outcome") == "converged");
  CHECK(case_of(base, kPlantCase).at("data_sha256") == sha256sum(plant_csv()));
  // The accepted baseline passes its own check.
  TempDir tmp("plant-self");
  expect_exit("check " + quoted(plant_first().results().string()) + " --baseline " + quoted(plant_baseline().string()),
              tmp.path(), 0);
}

TEST_CASE("gate: a feature recorded in other units (data change) fails with both edges and hashes", "[e2e]") {
  TempDir tmp("data-change");
  const json base = read_json(plant_first().results());
  // Only the data bytes differ: the suite copy is byte for byte the accepted one.
  const GatedRun g = run_plant_variant(tmp, "", plant_in_millimetres(), 1);
  CHECK(g.results.at("suite").at("sha256") == base.at("suite").at("sha256"));

  const json& was = case_of(base, kPlantCase);
  const json& now = case_of(g.results, kPlantCase);
  const std::string old_sha = sha256sum(plant_csv()), new_sha = sha256sum(tmp / "data" / "plant.csv");
  CHECK(old_sha != new_sha);
  CHECK(was.at("data_sha256") == old_sha);
  CHECK(now.at("data_sha256") == new_sha);

  // The valve column becomes the stiffest direction: the edge falls well below the pinned rate.
  REQUIRE(now.at("summary").at("edge").is_number());
  const double edge_was = was.at("summary").at("edge"), edge_now = now.at("summary").at("edge");
  CHECK(edge_now < edge_was / 2.0);
  CHECK(edge_now < now.at("summary").at("pinned").get<double>());

  const std::string section = case_section(g.report_md, kPlantCase);
  INFO("report.md:\n" << g.report_md);
  REQUIRE_FALSE(section.empty());
  CHECK(g.report_md.find("#### fail: " + std::string(kPlantCase)) != std::string::npos);
  CHECK(section.find(fmt4(edge_was)) != std::string::npos);
  CHECK(section.find(fmt4(edge_now)) != std::string::npos);
  CHECK(section.find(old_sha) != std::string::npos);
  CHECK(section.find(new_sha) != std::string::npos);
  CHECK(has_finding(section, "fail", "edge_moved"));
  CHECK(has_finding(section, "fail", "pinned_headroom"));
  CHECK(has_finding(section, "warn", "data_changed"));
  // The quadratic read no data and did not change.
  CHECK(case_section(g.report_md, kBowlCase).empty());
  CHECK(g.cli.out.find("verdict: fail") != std::string::npos);
}

TEST_CASE("gate: a loss summed instead of averaged (code change) moves the edge by n and fails", "[e2e]") {
  TempDir tmp("reduction-sum");
  json suite = plant_suite_json();
  problem_of(suite, "plant-ls")["reduction"] = "sum";
  const GatedRun g = run_plant_variant(tmp, suite.dump(2), "", 1);
  const json base = read_json(plant_first().results());
  const double edge_was = case_of(base, kPlantCase).at("summary").at("edge");
  const json& now = case_of(g.results, kPlantCase).at("summary");
  REQUIRE(now.at("edge").is_number());
  // The sum multiplies the gradient by n = 300 rows, so the edge divides by 300 (within the
  // 1% search precision of both runs).
  CHECK(edge_was / now.at("edge").get<double>() == Approx(300.0).epsilon(0.03));
  const std::string section = case_section(g.report_md, kPlantCase);
  INFO("report.md:\n" << g.report_md);
  CHECK(has_finding(section, "fail", "edge_moved"));
  CHECK(has_finding(section, "fail", "pinned_headroom"));
  // The data did not change; the suite file did (shown, not failed).
  CHECK_FALSE(has_finding(section, "warn", "data_changed"));
  CHECK(g.report_md.find("suite file changed") != std::string::npos);
}

TEST_CASE("gate: heavy-ball beta 0.9 -> 0.99 (code change) fails the case pinned for 0.9", "[e2e]") {
  TempDir tmp("beta");
  json suite = plant_suite_json();
  suite["optimizers"]["hb"]["beta"] = 0.99;
  const GatedRun g = run_plant_variant(tmp, suite.dump(2), "", 1);
  const std::string section = case_section(g.report_md, kBowlCase);
  INFO("report.md:\n" << g.report_md);
  REQUIRE_FALSE(section.empty());
  CHECK(g.report_md.find("#### fail: " + std::string(kBowlCase)) != std::string::npos);
  // β 0.99 rings (overshoot) at the rates that suited 0.9: the safe range shrinks far below the
  // pinned rate, although the theoretical threshold 2(1+β)/L hardly moves.
  CHECK(has_finding(section, "fail", "edge_moved"));
  CHECK(has_finding(section, "fail", "pinned_headroom"));
  // The least-squares case did not change: no finding of its own.
  CHECK(case_section(g.report_md, kPlantCase).empty());
  CHECK(case_of(g.results, kBowlCase).at("optimizer").at("beta") == 0.99);
}

TEST_CASE("gate: a different but equally safe pinned rate passes", "[e2e]") {
  TempDir tmp("pinned-half");
  const json base = read_json(plant_first().results());
  const double pinned_was = case_of(base, kPlantCase).at("summary").at("pinned");
  json suite = plant_suite_json();
  problem_of(suite, "plant-ls")["pinned"] = 0.5 * pinned_was;
  const GatedRun g = run_plant_variant(tmp, suite.dump(2), "", 0);
  const json& now = case_of(g.results, kPlantCase).at("summary");
  CHECK(now.at("pinned").get<double>() == Approx(0.5 * pinned_was));
  CHECK(now.at("pinned").get<double>() >= now.at("floor").get<double>());
  CHECK(now.at("headroom").get<double>() >= 1.5);
  CHECK(now.at("pinned_outcome") == "converged");
  CHECK(g.cli.out.find("verdict: pass") != std::string::npos);
  INFO("report.md:\n" << g.report_md);
  CHECK(g.report_md.find("**verdict: pass — ") != std::string::npos);
  CHECK(g.report_md.find("`pinned_headroom`") == std::string::npos);  // no warn or fail of it
}

TEST_CASE("gate: junit.xml of a failing run parses and carries the failures", "[e2e]") {
  TempDir tmp("junit");
  json suite = plant_suite_json();
  problem_of(suite, "plant-ls")["reduction"] = "sum";
  const GatedRun g = run_plant_variant(tmp, suite.dump(2), "", 1);
  pugi::xml_document doc;
  const pugi::xml_parse_result parsed = doc.load_file((g.out / "junit.xml").c_str());
  INFO(parsed.description());
  REQUIRE(parsed);
  int failures = 0, on_plant = 0;
  for (const pugi::xpath_node& n : doc.select_nodes("//testcase/failure")) {
    ++failures;
    if (std::string(n.node().parent().attribute("classname").value()) == kPlantCase) ++on_plant;
  }
  CHECK(failures >= 1);
  CHECK(on_plant >= 2);  // edge_moved and pinned_headroom
  const pugi::xpath_node edge =
      doc.select_node(("//testcase[@classname='" + std::string(kPlantCase) + "'][@name='edge_moved']/failure").c_str());
  CHECK(edge);
  // The counts in the suite element agree with the elements.
  int counted = 0;
  for (const pugi::xpath_node& s : doc.select_nodes("//testsuite")) counted += s.node().attribute("failures").as_int();
  CHECK(counted == failures);
}
