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
  json verified;
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
    // Verify mode (the default with a baseline): every case is verified, and the same seeds give
    // the same probes, so every re-run's summaries are the same numbers, not just within tolerance.
    const json again = read_json(out / "results.json");
    if (i == 0) verified = again;
    for (std::size_t c = 0; c < first.at("cases").size(); ++c) {
      CHECK(again["cases"][c].at("verification").at("verified") == true);
      CHECK(again["cases"][c].at("summary") == verified["cases"][c].at("summary"));
    }
  }
  // Searched in full (--full), a re-run locates the same numbers as the accepted first run.
  const fs::path out = tmp / "full";
  expect_exit("run " + quoted(e2e_suite("gate-small.json").string()) + " --quiet --full --baseline " +
                  quoted(baseline.string()) + " --out " + quoted(out.string()),
              tmp.path(), 0);
  const json full = read_json(out / "results.json");
  for (std::size_t c = 0; c < first.at("cases").size(); ++c)
    CHECK(full["cases"][c].at("summary") == first["cases"][c].at("summary"));
  report_time("10 gated re-runs of gate-small", seconds);
}
