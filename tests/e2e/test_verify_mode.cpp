// Verify mode end to end (docs/design.md, "Verify mode"): with --baseline, `run` checks the
// baseline's boundaries with a few probe runs per case; an unchanged demo is verified in a
// fraction of the search's runs, a planted change is searched and fails naming the new edge,
// accept refuses verified results, and --full, rates.verify and --resume behave.
#include "e2e_fixtures.hpp"

using namespace stepgate::e2e;

namespace {

long total_runs(const json& results) {
  long n = 0;
  for (const json& c : results.at("cases")) {
    n += static_cast<long>(c.at("runs").size());
    const json& v = c.at("verification");
    if (!v.is_null() && !v.at("verified").get<bool>()) n += v.at("runs").get<long>();  // probes, then the search
  }
  return n;
}

// The demo suite copied into `dir` with its data and reference file (relative paths intact),
// after `edit` has changed it.
fs::path demo_copy(const fs::path& dir, const std::function<void(json&)>& edit) {
  json suite = json::parse(read_text(demo_suite()));
  edit(suite);
  const fs::path path = dir / "suites" / "demo.json";
  write_json(path, suite);
  write_text(dir / "suites" / "data" / "longley.csv", read_text(source_dir() / "suites" / "data" / "longley.csv"));
  write_text(dir / "references" / "longley.certified.json",
             read_text(source_dir() / "references" / "longley.certified.json"));
  return path;
}

}  // namespace

TEST_CASE("verify mode: the unchanged demo is verified in a fraction of the runs, the same for any --jobs", "[e2e][verify]") {
  const json full = read_json(demo_first().results());
  const CachedRun& two = demo_verified(2);
  const CachedRun& one = demo_verified(1);
  INFO("stdout:\n" << two.cli.out << "\nstderr:\n" << two.cli.err);
  REQUIRE(two.cli.exit_code == 0);
  REQUIRE(one.cli.exit_code == 0);
  const json a = read_json(two.results()), b = read_json(one.results());
  CHECK(without_run_facts(a) == without_run_facts(b));  // the same bits for --jobs 1 and 2

  const long searched = total_runs(full), probed = total_runs(a);
  std::printf("[e2e verify] demo: %ld runs searched in full, %ld runs verified\n", searched, probed);
  CHECK(probed * 5 <= searched);
  for (const json& c : a.at("cases")) {
    INFO(c.at("id"));
    const json& v = c.at("verification");
    REQUIRE(v.is_object());
    CHECK(v.at("verified") == true);
    CHECK(v.at("disagreement").is_null());
    const json& f = case_of(full, c.at("id").get<std::string>());
    // The full search's edge lies in the interval the probes proved.
    const double edge = f.at("summary").at("edge").get<double>();
    CHECK(v.at("edge_probes")[0].get<double>() <= edge);
    CHECK(edge < v.at("edge_probes")[1].get<double>());
    CHECK(c.at("summary").at("best_rate").is_null());  // not measured
    CHECK(c.at("summary").at("blowup").is_null());
    const long seeds = static_cast<long>(c.at("summary").at("seeds").size());
    CHECK(static_cast<long>(c.at("runs").size()) <= 5 * seeds);
    for (const json& r : c.at("runs")) CHECK(r.at("role") == "verify");
  }
  const std::string md = read_text(two.out / "report.md");
  CHECK(md.find("verify mode: 11 of 11 cases verified against the baseline") != std::string::npos);
  CHECK(md.find("### Verified against the baseline") != std::string::npos);
  CHECK(md.find("pass (verified)") != std::string::npos);
  CHECK(read_text(two.out / "junit.xml").find("name=\"verify_mode\"") != std::string::npos);
  CHECK(read_text(two.out / "report.html").find("baseline check") != std::string::npos);

  SECTION("accept refuses verified results and writes nothing") {
    TempDir tmp("verify-accept");
    const CliResult r = expect_exit("accept " + quoted(two.results().string()) + " --baseline b.json --record r.md",
                                    tmp.path(), 2);
    CHECK(r.err.find("#/cases/0/verification") != std::string::npos);
    CHECK(r.err.find("--full") != std::string::npos);
    CHECK_FALSE(fs::exists(tmp / "b.json"));
    CHECK_FALSE(fs::exists(tmp / "r.md"));
  }
  SECTION("--full searches every case and its results can be accepted") {
    const json f = read_json(demo_second().results());
    for (const json& c : f.at("cases")) CHECK(c.at("verification").is_null());
    TempDir tmp("verify-full-accept");
    expect_exit("accept " + quoted(demo_second().results().string()) + " --baseline b.json --record r.md", tmp.path(), 0);
  }
  SECTION("--resume of a finished verify run runs nothing again") {
    TempDir tmp("verify-resume");
    const fs::path out = tmp / "out";
    const std::string args = "run " + quoted(demo_suite().string()) + " --baseline " +
                             quoted(demo_baseline().string()) + " --out " + quoted(out.string());
    expect_exit(args, tmp.path(), 0);
    const std::string journal = read_text(out / "journal.jsonl");
    const CliResult again = expect_exit(args + " --resume", tmp.path(), 0);
    CHECK(again.err.find("resuming: " + std::to_string(probed) + " finished runs") != std::string::npos);
    CHECK(read_text(out / "journal.jsonl") == journal);
    CHECK(without_run_facts(read_json(out / "results.json")) == without_run_facts(a));
  }
}

TEST_CASE("verify mode: a planted change is searched and fails naming the new edge while the rest stays verified", "[e2e][verify]") {
  TempDir tmp("verify-planted");
  // bowl-50's curvature x1.5 moves every bowl-50 edge down by 1/1.5.
  const fs::path suite = demo_copy(tmp.path(), [](json& s) { problem_of(s, "bowl-50")["L"] = 1.5; });
  const fs::path out = tmp / "out";
  const CliResult r = expect_exit("run " + quoted(suite.string()) + " --quiet --baseline " +
                                      quoted(demo_baseline().string()) + " --out " + quoted(out.string()),
                                  tmp.path(), 1);
  const json results = read_json(out / "results.json");
  for (const json& c : results.at("cases")) {
    const std::string id = c.at("id");
    INFO(id);
    const json& v = c.at("verification");
    REQUIRE(v.is_object());
    const bool planted = id.rfind("bowl-50/", 0) == 0;
    CHECK(v.at("verified") == !planted);
    if (!planted) continue;
    CHECK(v.at("disagreement").get<std::string>().find("just inside the edge") != std::string::npos);
    const double was = case_of(read_json(demo_first().results()), id).at("summary").at("edge").get<double>();
    const double now = c.at("summary").at("edge").get<double>();
    CHECK(now / was == Approx(1.0 / 1.5).epsilon(0.02));  // the search's new edge
    CHECK(r.out.find("fail  " + id + "  edge_moved: edge") != std::string::npos);
    CHECK(r.out.find(" (searched)") == std::string::npos);  // --quiet: no table
  }
  const std::string md = read_text(out / "report.md");
  CHECK(md.find("8 of 11 cases verified against the baseline") != std::string::npos);
  CHECK(md.find("3 searched after a probe disagreed") != std::string::npos);
  CHECK(md.find("fail (searched)") != std::string::npos);
  CHECK(md.find("baseline check: searched: the baseline check disagreed") != std::string::npos);
}

TEST_CASE("verify mode: rates.verify false searches that problem and --full needs a baseline", "[e2e][verify]") {
  TempDir tmp("verify-off");
  const fs::path suite =
      demo_copy(tmp.path(), [](json& s) { problem_of(s, "bowl-200")["rates"] = json{{"verify", false}}; });
  const fs::path out = tmp / "out";
  expect_exit("run " + quoted(suite.string()) + " --quiet --baseline " + quoted(demo_baseline().string()) + " --out " +
                  quoted(out.string()),
              tmp.path(), 0);
  const json results = read_json(out / "results.json");
  for (const json& c : results.at("cases"))
    CHECK(c.at("verification").is_null() == (c.at("id") == "bowl-200/none/gd"));
  CHECK(case_of(results, "bowl-200/none/gd").at("summary").at("best_rate").is_number());

  const CliResult bare = expect_exit("run " + quoted(suite.string()) + " --full --out x", tmp.path(), 2);
  CHECK(bare.err.find("--full") != std::string::npos);
  CHECK_FALSE(fs::exists(tmp / "x"));
  // A setting that is not a boolean is refused at its pointer before any run.
  const fs::path bad = demo_copy(tmp / "bad", [](json& s) { s["defaults"]["rates"]["verify"] = "yes"; });
  const CliResult refused = expect_exit("validate " + quoted(bad.string()), tmp.path(), 2);
  CHECK(refused.err.find("/defaults/rates/verify") != std::string::npos);
}
