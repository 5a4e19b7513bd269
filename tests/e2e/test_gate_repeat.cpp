// No change, no failure: the same suite re-run with the same seeds passes the gate of its
// accepted first run, every time (tests/e2e/suites/gate-small.json: the demo's kinds of cases
// at a size that runs in seconds).
#include "e2e_fixtures.hpp"

using namespace stepgate::e2e;

TEST_CASE("gate: ten re-runs of an unchanged suite all pass", "[e2e]") {
  REQUIRE(gate_small_first().cli.exit_code == 0);
  const fs::path baseline = gate_small_baseline();
  const json first = read_json(gate_small_first().results());
  REQUIRE(first.at("cases").size() == 5);
  TempDir tmp("repeat");
  double seconds = 0.0;
  for (int i = 0; i < 10; ++i) {
    INFO("repeat " << i);
    const fs::path out = tmp / ("run-" + std::to_string(i));
    const CliResult run = expect_exit("run " + quoted(e2e_suite("gate-small.json").string()) + " --quiet --baseline " +
                                          quoted(baseline.string()) + " --out " + quoted(out.string()),
                                      tmp.path(), 0);
    seconds += run.seconds;
    CHECK(run.out.find("verdict: pass — 5 cases: 0 failing, 0 with warnings, 5 passing") != std::string::npos);
    const CliResult check = expect_exit(
        "check " + quoted((out / "results.json").string()) + " --baseline " + quoted(baseline.string()), tmp.path(), 0);
    CHECK(check.out.find("verdict: pass") != std::string::npos);
    // Same seeds: the located ranges are the same numbers, not just within tolerance.
    const json again = read_json(out / "results.json");
    for (std::size_t c = 0; c < first.at("cases").size(); ++c)
      CHECK(again["cases"][c].at("summary") == first["cases"][c].at("summary"));
  }
  report_time("10 gated re-runs of gate-small", seconds);
}
