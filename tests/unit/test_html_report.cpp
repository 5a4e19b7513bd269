// report.html: escaping of every suite string, no script and no external resource, the
// figures of each case, the verdict and the legend; and the escaping and SVG helpers.
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <regex>
#include <string>
#include <vector>

#include "stepgate/gate/baseline.hpp"
#include "stepgate/gate/findings.hpp"
#include "stepgate/report/html_case_plots.hpp"
#include "stepgate/report/html_escape.hpp"
#include "stepgate/report/reporter.hpp"
#include "stepgate/report/svg.hpp"
#include "support/sample_runs.hpp"

using namespace stepgate;

namespace {

const std::string kEvilId = "<script>alert(1)</script>/none/gd";
const std::string kEvilReason = "\"&'<b>";

// Gap shrinks by a rate-dependent factor per step, or grows for a diverged run.
StoredRun make_run(double rate, long seed_index, Outcome o, RunRole role, double optimum) {
  StoredRun s = test::sample_run({.rate = rate,
                                  .rng_seed = 100 + static_cast<std::uint64_t>(seed_index),
                                  .seed_index = seed_index,
                                  .outcome = o,
                                  .role = role,
                                  .reason = kEvilReason,
                                  .optimum = optimum,
                                  .per_step = o == Outcome::diverged ? 3.0 : 1.0 - std::min(0.9, rate)});
  if (o == Outcome::converged) s.record.iterations = 40;
  s.record.steps = 50;
  return s;
}

CaseResult make_case(const std::string& id, double edge) {
  CaseResult c;
  c.id = id;
  c.problem = "p<i>";
  c.scaling = "none";
  c.problem_kind = "quadratic";
  c.optimum_cost = 0.5;
  c.theory.predicted_blowup = 2.0;
  c.theory.L = 1.0;
  c.theory.rule = "2/L";
  c.summary.floor = 0.01;
  c.summary.edge = edge;
  c.summary.blowup = 2.1;
  c.summary.best_rate = 0.5;
  c.summary.pinned = 0.1;
  c.summary.headroom = edge / 0.1;
  c.summary.precision = 0.01;
  for (long seed = 0; seed < 2; ++seed) {
    c.summary.seeds.push_back({static_cast<std::uint64_t>(seed + 1)});
    for (double rate : {0.001, 0.01, 0.1, 1.0})
      c.runs.push_back(make_run(rate, seed, rate < 0.005 ? Outcome::slow : Outcome::converged, RunRole::grid, 0.5));
    c.runs.push_back(make_run(10.0, seed, Outcome::diverged, RunRole::grid, 0.5));
  }
  c.summary.runs = static_cast<int>(c.runs.size());
  return c;
}

Results make_results() {
  Results r;
  r.suite = {"suite <&>", "suites/x.json", "abc123"};
  r.tool = {"0.1.0", "gcc", "Release"};
  r.cases.push_back(make_case(kEvilId, 1.0));
  r.cases.push_back(make_case("plain/std/gd", 0.8));
  return r;
}

Baseline make_baseline(const Results& r) {
  Baseline b;
  b.suite = r.suite;
  b.accepted = "2026-01-01T00:00:00Z";
  for (const CaseResult& c : r.cases) {
    BaselineCase bc;
    bc.id = c.id;
    bc.floor = 0.01;
    bc.edge = 1.0;  // the second case's edge moved from 1.0 to 0.8: a failing finding
    bc.best_rate = 0.5;
    bc.pinned = 0.1;
    bc.headroom = 10.0;
    bc.precision = 0.01;
    b.cases.push_back(bc);
  }
  return b;
}

std::size_t count(const std::string& s, const std::string& what) {
  std::size_t n = 0;
  for (std::size_t at = s.find(what); at != std::string::npos; at = s.find(what, at + 1)) ++n;
  return n;
}

}  // namespace

TEST_CASE("html_escape replaces the five markup characters", "[html]") {
  CHECK(html_escape("a&b<c>d\"e'f") == "a&amp;b&lt;c&gt;d&quot;e&#39;f");
  CHECK(html_escape("plain ≤ text") == "plain ≤ text");
  CHECK(html_escape("&amp;") == "&amp;amp;");  // escaping is not idempotent, so it is done once
}

TEST_CASE("svg helpers: 1-decimal coordinates, log scale, palette from light to dark", "[html]") {
  CHECK(svg::num(12.345) == "12.3");
  CHECK(svg::num(-0.04) == "0");
  CHECK(svg::num(7.0) == "7");
  const svg::LogScale x{0.01, 100.0, 0.0, 400.0};
  CHECK(x(1.0) == Approx(200.0));
  CHECK(x(0.01) == Approx(0.0));
  CHECK(x(-1.0) == 0.0);
  CHECK(svg::decade_ticks(0.005, 20.0) == std::vector<double>{0.01, 0.1, 1.0, 10.0});
  // Light end brighter than the dark end (sum of the channels as a rough lightness).
  auto sum = [](const std::string& hex) {
    return std::stoi(hex.substr(1, 2), nullptr, 16) + std::stoi(hex.substr(3, 2), nullptr, 16) +
           std::stoi(hex.substr(5, 2), nullptr, 16);
  };
  CHECK(svg::sequential_colour(0.0) == "#e9b949");
  CHECK(svg::sequential_colour(1.0) == "#2b1d6b");
  CHECK(sum(svg::sequential_colour(0.0)) > sum(svg::sequential_colour(0.5)));
  CHECK(sum(svg::sequential_colour(0.5)) > sum(svg::sequential_colour(1.0)));
  CHECK(svg::text(1, 2, "<b>", "class=\"t\"").find("&lt;b&gt;") != std::string::npos);
}

TEST_CASE("report.html escapes every suite string and loads nothing", "[html]") {
  const Results results = make_results();
  const Baseline baseline = make_baseline(results);
  const GateReport gate = apply_gate(results, &baseline);
  REQUIRE_FALSE(gate.pass);  // the second case's edge moved by 20%
  const auto reporter = make_html_reporter();
  CHECK(reporter->format() == "html");
  CHECK(reporter->file_name() == "report.html");
  const std::string html = reporter->render({results, &baseline, gate});

  CHECK(html.rfind("<!DOCTYPE html>", 0) == 0);
  CHECK(html.find("<script") == std::string::npos);
  CHECK(html.find("</script") == std::string::npos);
  CHECK(html.find("&lt;script&gt;alert(1)&lt;/script&gt;/none/gd") != std::string::npos);
  CHECK(html.find("&quot;&amp;&#39;&lt;b&gt;") != std::string::npos);  // the runs' reason, in hover titles
  CHECK(html.find(kEvilReason) == std::string::npos);
  CHECK(html.find("p&lt;i&gt;") != std::string::npos);
  CHECK(html.find("suite &lt;&amp;&gt;") != std::string::npos);
  CHECK(html.find("plain/std/gd") != std::string::npos);
  // Nothing external: the only URL is the SVG namespace, and no src= or href= leaves the page.
  const std::string xmlns = "http://www.w3.org/2000/svg";
  CHECK(count(html, "http://") == count(html, xmlns));
  CHECK(html.find("https://") == std::string::npos);
  CHECK(html.find(" src=") == std::string::npos);
  const std::regex href(R"(href="([^"]*)\")");
  for (auto it = std::sregex_iterator(html.begin(), html.end(), href); it != std::sregex_iterator(); ++it)
    CHECK((*it)[1].str().rfind("#", 0) == 0);
  CHECK_FALSE(std::regex_search(html, std::regex(R"(<[a-z]+[^>]*\son[a-z]+\s*=)")));  // no event handler
  // The suite chart, then three figures per case (range bar, cost plot, outcome map), legends,
  // the verdict.
  CHECK(count(html, "<svg ") == 1 + 3 * results.cases.size());
  CHECK(html.find("class=\"suitechart\"") < html.find("id=\"case-1\""));
  CHECK(count(html, "class=\"legend\"") >= 2 * results.cases.size());
  CHECK(html.find("verdict: fail") != std::string::npos);
  CHECK(html.find("no baseline") == std::string::npos);
  CHECK(html.find("<details>") != std::string::npos);  // passing checks are folded away
  CHECK(html.find("edge_moved") != std::string::npos);
  // Findings: the failing edge move is listed before any passing check.
  CHECK(html.find("badge fail") < html.find("<details>"));
}

TEST_CASE("report.html without a baseline says so and still draws every case", "[html]") {
  Results results = make_results();
  const GateReport clean = apply_gate(results, nullptr);
  const std::string first = make_html_reporter()->render({results, nullptr, clean});
  CHECK(first.find(clean.pass ? "verdict: pass" : "verdict: fail") != std::string::npos);
  // A case that could not be run: its error shows (escaped), and it fails the verdict.
  CaseResult broken;
  broken.id = "broken/none/gd";
  broken.error = "command <exit 3>";
  results.cases.push_back(broken);
  const GateReport gate = apply_gate(results, nullptr);
  const std::string html = make_html_reporter()->render({results, nullptr, gate});
  CHECK(html.find("no baseline") != std::string::npos);
  CHECK(html.find("verdict: fail") != std::string::npos);
  CHECK(html.find("Could not be run: command &lt;exit 3&gt;") != std::string::npos);
  CHECK(html.find("No rate to show.") != std::string::npos);
  CHECK(count(html, "<svg ") == 1 + 3 * (results.cases.size() - 1));
  CHECK(html.find("class=\"band-base\"") == std::string::npos);
  CHECK(html.find("class=\"band-now\"") != std::string::npos);
}

TEST_CASE("figures: one line per rate, diverged lines end with an x, cells lettered", "[html]") {
  const CaseResult c = make_case("a/b/c", 1.0);
  const std::string plot = cost_plot_html(c);
  CHECK(count(plot, "<polyline") == 5);   // five rates of the first seed
  CHECK(count(plot, "class=\"endx\"") == 1);  // the diverged one at rate 10
  CHECK(plot.find("cost − optimum") != std::string::npos);  // J* known: gaps are plotted
  const std::string map = outcome_map_html(c);
  CHECK(count(map, "<rect") >= 10);  // 5 rates x 2 seeds
  CHECK(count(map, ">C</text>") == 6);
  CHECK(count(map, ">S</text>") == 2);
  CHECK(count(map, ">D</text>") == 2);
  CHECK(map.find("rate 10, seed 2: diverged") != std::string::npos);
  CHECK(map.find("rate 0.1, seed 1: converged, 40 iterations") != std::string::npos);
  const std::string bar = range_bar_html(c, nullptr);
  CHECK(bar.find("no baseline") != std::string::npos);
  CHECK(bar.find("predicted blow-up") != std::string::npos);
  CHECK(bar.find("pinned") != std::string::npos);
  CHECK(plot.find("<h3>Cost − optimum (log scale) per iteration, first seed</h3>") != std::string::npos);
  // Marker labels name their own line; two lines too close to label apart get one label.
  const auto labels = [](const std::string& svg) {
    std::vector<std::string> out;
    for (std::size_t at = svg.find("class=\"mlabel"); at != std::string::npos; at = svg.find("class=\"mlabel", at + 1)) {
      const std::size_t open = svg.find('>', at) + 1;
      out.push_back(svg.substr(open, svg.find('<', open) - open));
    }
    return out;
  };
  CaseResult apart = c, close = c;
  apart.summary.blowup = 8.0, apart.theory.predicted_blowup = 2.0;
  close.summary.blowup = 2.001, close.theory.predicted_blowup = 2.0;
  const std::vector<std::string> apart_labels = labels(range_bar_html(apart, nullptr));
  CHECK(std::count(apart_labels.begin(), apart_labels.end(), "measured blow-up") == 1);
  CHECK(std::count(apart_labels.begin(), apart_labels.end(), "predicted blow-up") == 1);
  const std::vector<std::string> close_labels = labels(range_bar_html(close, nullptr));
  CHECK(std::count(close_labels.begin(), close_labels.end(), "measured and predicted blow-up") == 1);
  CHECK(std::count(close_labels.begin(), close_labels.end(), "predicted blow-up") == 0);
  CHECK(std::count(close_labels.begin(), close_labels.end(), "measured blow-up") == 0);
  // A line cap: many rates of the first seed still give at most kMaxCostLines lines.
  CaseResult many = c;
  many.runs.clear();
  for (int i = 0; i < 60; ++i) many.runs.push_back(make_run(1e-4 * std::pow(1.2, i), 0, Outcome::converged, RunRole::grid, 0.5));
  CHECK(count(cost_plot_html(many), "<polyline") == kMaxCostLines);
}

TEST_CASE("suite chart: every case on one axis, baseline beside current, failing rows marked", "[html]") {
  Results results = make_results();
  CaseResult broken;
  broken.id = "broken/none/gd";
  broken.error = "no such file";
  results.cases.push_back(broken);
  Baseline base;
  for (const CaseResult& c : results.cases) {
    if (!c.error.empty()) continue;
    BaselineCase b;
    b.id = c.id;
    b.floor = c.summary.floor;
    b.edge = c.summary.edge * 2.0;  // every case lost half its range
    base.cases.push_back(b);
  }
  BaselineCase gone;
  gone.id = "gone/none/gd";
  gone.floor = 0.02, gone.edge = 0.4;
  base.cases.push_back(gone);
  const GateReport gate = apply_gate(results, &base);
  const std::string chart = suite_chart_html(results, &base, gate);
  // One row per case of the results, and one for the case only the baseline has.
  CHECK(count(chart, "<g class=\"row ") == results.cases.size() + 1);
  CHECK(count(chart, "class=\"band-now\"") == results.cases.size() - 1);  // the broken one has none
  CHECK(count(chart, "class=\"band-base\"") == base.cases.size());
  CHECK(chart.find(">not run<") != std::string::npos);
  CHECK(chart.find(">missing from the results<") != std::string::npos);
  CHECK(count(chart, "class=\"m-pin-head\"") == results.cases.size() - 1);
  // Every case with a failing finding is drawn as failing; ids are escaped.
  int failing = 0;
  for (const CaseResult& c : results.cases) failing += gate.worst(c.id) == Severity::fail;
  failing += gate.worst("gone/none/gd") == Severity::fail;
  CHECK(failing > 0);
  CHECK(count(chart, "class=\"row sev-fail\"") == static_cast<std::size_t>(failing));
  CHECK(chart.find("<script>") == std::string::npos);
  // One axis for all: decade ticks spanning every rate drawn.
  CHECK(chart.find(">rate (log scale)<") != std::string::npos);
  // A long id is cut for the label column but whole in the row's title.
  Results one;
  CaseResult longer = results.cases[0];
  longer.id = std::string(80, 'x') + "/none/gd";
  one.cases = {longer};
  const std::string cut = suite_chart_html(one, nullptr, apply_gate(one, nullptr));
  CHECK(cut.find(std::string(43, 'x') + "…") != std::string::npos);
  CHECK(cut.find("<title>" + longer.id + ": ") != std::string::npos);
}
