// The demo suite end to end: results.json, the summary table, determinism across --jobs, and a
// re-run gated against the accepted first run. The demo is run twice in all (see e2e_fixtures);
// the three parts are sections of one test case so that ctest, which starts one process per
// test case, also runs it only twice.
#include <cmath>

#include "e2e_fixtures.hpp"

using namespace stepgate::e2e;

namespace {

bool is_number(const json& v) { return v.is_number(); }

}  // namespace

TEST_CASE("demo: end to end", "[e2e]") {
  SECTION("run writes results.json with ordered safe ranges and prints the table") {
    const CachedRun& demo = demo_first();
    INFO("stdout:\n" << demo.cli.out << "\nstderr:\n" << demo.cli.err);
    REQUIRE(demo.cli.exit_code == 0);
    const json results = read_json(demo.results());
    CHECK(results.at("format") == "stepgate.results/2");
    CHECK(results.at("suite").at("name") == "demo");
    REQUIRE(results.at("cases").size() > 0);

    int checked = 0;
    for (const json& c : results.at("cases")) {
      const std::string id = c.at("id");
      INFO("case " << id);
      CHECK(c.at("error").is_null());
      const json& s = c.at("summary");
      // Every case of the demo has a safe range (the suite was written that way).
      REQUIRE(is_number(s.at("edge")));
      REQUIRE(is_number(s.at("floor")));
      REQUIRE(is_number(s.at("best_rate")));
      const double floor = s.at("floor"), edge = s.at("edge"), best = s.at("best_rate");
      CHECK(floor > 0.0);
      CHECK(floor <= best);
      CHECK(best <= edge);
      // blowup is null when nothing diverged up to the top of the grid (logistic losses orbit).
      if (is_number(s.at("blowup"))) CHECK(edge < s.at("blowup").get<double>());
      const json& bracket = s.at("edge_bracket");
      if (is_number(bracket.at(0)) && is_number(bracket.at(1))) {
        CHECK(bracket.at(0).get<double>() <= edge);
        CHECK(edge < bracket.at(1).get<double>());
      }
      // The summary table names every case.
      CHECK(demo.cli.out.find(id) != std::string::npos);
      ++checked;
    }
    CHECK(checked == static_cast<int>(results.at("cases").size()));
    CHECK(demo.cli.out.find("edge") != std::string::npos);
    CHECK(demo.cli.out.find("floor") != std::string::npos);

    // The Longley case records the hash of the file it read (GNU sha256sum as the outside reference).
    const json& longley = case_of(results, "longley-ols/std/nesterov-0.99");
    CHECK(longley.at("data_sha256") == sha256sum(source_dir() / "suites" / "data" / "longley.csv"));
    // Generated data has no file, so no hash.
    CHECK(case_of(results, "bowl-50/none/gd").at("data_sha256").is_null());
    CHECK(fs::exists(demo.out / "report.md"));
    CHECK(fs::exists(demo.out / "report.html"));
    CHECK(fs::exists(demo.out / "junit.xml"));
  }

  SECTION("results do not depend on --jobs") {
    const CachedRun& jobs2 = demo_first();
    const CachedRun& jobs1 = demo_second();
    REQUIRE(jobs2.cli.exit_code == 0);
    REQUIRE(fs::exists(jobs1.results()));
    const json a = read_json(jobs2.results()), b = read_json(jobs1.results());
    CHECK(a.at("host").at("jobs") == 2);
    CHECK(b.at("host").at("jobs") == 1);
    const json a_core = without_run_facts(a), b_core = without_run_facts(b);
    REQUIRE(a_core.at("cases").size() == b_core.at("cases").size());
    for (std::size_t i = 0; i < a_core.at("cases").size(); ++i) {
      INFO("case " << a_core["cases"][i].at("id"));
      CHECK(a_core["cases"][i] == b_core["cases"][i]);
    }
    CHECK(a_core == b_core);
  }

  SECTION("a re-run with the same seeds passes the gate of the accepted first run") {
    const fs::path baseline = demo_baseline();
    const json b = read_json(baseline);
    CHECK(b.at("cases").size() == read_json(demo_first().results()).at("cases").size());
    const CachedRun& again = demo_second();
    INFO("stdout:\n" << again.cli.out << "\nstderr:\n" << again.cli.err);
    CHECK(again.cli.exit_code == 0);
    CHECK(again.cli.out.find("verdict: pass") != std::string::npos);
    CHECK(again.cli.out.find("fail ") == std::string::npos);

    // `check` on the same results says the same, and so does the report of the gated run.
    TempDir tmp("demo-check");
    const CliResult check = expect_exit(
        "check " + quoted(again.results().string()) + " --baseline " + quoted(baseline.string()), tmp.path(), 0);
    CHECK(check.out.find("verdict: pass") != std::string::npos);
    CHECK(read_text(again.out / "report.md").find("**verdict: pass — ") != std::string::npos);
  }

  SECTION("a baseline accepted with the portable kernels passes with this build's kernels") {
    // references/demo.portable.baseline.json was accepted from a STEPGATE_ARCH=portable build
    // (SSE2, no FMA); scripts/build makes an `auto` build (AVX2/AVX-512 with FMA here), whose
    // results differ in the last bits. The gate must not see that as a change.
    const fs::path portable = source_dir() / "references" / "demo.portable.baseline.json";
    const json b = read_json(portable);
    CHECK(b.at("host").at("kernels").get<std::string>().rfind("x86-64;", 0) == 0);
    const json results = read_json(demo_first().results());
    INFO("this build's kernels: " << results.at("host").at("kernels"));
    CHECK(!results.at("host").at("kernels").get<std::string>().empty());
    TempDir tmp("demo-portable");
    const CliResult check = expect_exit(
        "check " + quoted(demo_first().results().string()) + " --baseline " + quoted(portable.string()), tmp.path(), 0);
    CHECK(check.out.find("verdict: pass") != std::string::npos);
  }
}
