// Exit codes of bad input and usage (docs/design.md: 2 bad input or usage, with a message that
// names the file, line or JSON pointer), and of --version.
#include "e2e_fixtures.hpp"

using namespace stepgate::e2e;

TEST_CASE("exit codes: bad input and usage exit 2 and say where", "[e2e]") {
  TempDir tmp("exit-codes");

  SECTION("a suite with an unknown key") {
    json suite = json::parse(read_text(e2e_suite("gate-small.json")));
    suite["problems"][1]["preciison"] = 0.1;
    const fs::path path = tmp / "typo.json";
    write_json(path, suite);
    for (const char* command : {"validate", "plan", "run"}) {
      INFO(command);
      const std::string out = std::string(command) == "run" ? " --out out" : "";
      const CliResult r = expect_exit(std::string(command) + " " + quoted(path.string()) + out, tmp.path(), 2);
      CHECK(r.err.find("#/problems/1/preciison") != std::string::npos);
      CHECK(r.err.find("typo.json") != std::string::npos);
    }
    CHECK_FALSE(fs::exists(tmp / "out" / "results.json"));
  }
  SECTION("a suite file that does not exist") {
    const CliResult r = expect_exit("run no-such-suite.json --out out", tmp.path(), 2);
    CHECK(r.err.find("no-such-suite.json") != std::string::npos);
    expect_exit("validate no-such-suite.json", tmp.path(), 2);
  }
  SECTION("a baseline file that does not exist: the run does not start") {
    const CliResult r = expect_exit(
        "run " + quoted(e2e_suite("gate-small.json").string()) + " --quiet --baseline no-such.baseline.json --out out",
        tmp.path(), 2);
    CHECK(r.err.find("no-such.baseline.json") != std::string::npos);
    CHECK_FALSE(fs::exists(tmp / "out" / "results.json"));
    CHECK_FALSE(fs::exists(tmp / "out"));
  }
  SECTION("check without --baseline") {
    const CliResult r = expect_exit("check " + quoted(gate_small_first().results().string()), tmp.path(), 2);
    CHECK(r.err.find("baseline") != std::string::npos);
  }
  SECTION("an unknown command") {
    const CliResult r = expect_exit("frobnicate suites/demo.json", tmp.path(), 2);
    CHECK(r.err.find("unknown command 'frobnicate'") != std::string::npos);
    expect_exit("", tmp.path(), 2);  // no command at all
  }
  SECTION("an impossible shard") {
    for (const char* shard : {"3/2", "0/2", "1/0", "2", "1/2x"}) {
      INFO(shard);
      const CliResult r = expect_exit(
          "run " + quoted(e2e_suite("gate-small.json").string()) + " --quiet --shard " + shard + " --out out",
          tmp.path(), 2);
      CHECK(r.err.find("--shard") != std::string::npos);
    }
    CHECK_FALSE(fs::exists(tmp / "out" / "results.json"));
  }
  SECTION("an unknown option") {
    const CliResult r =
        expect_exit("validate " + quoted(e2e_suite("gate-small.json").string()) + " --frobnicate", tmp.path(), 2);
    CHECK(r.err.find("frobnicate") != std::string::npos);
  }
}

TEST_CASE("exit codes: --version --help validate and plan of a good suite exit 0", "[e2e]") {
  TempDir tmp("exit-zero");
  const CliResult version = expect_exit("--version", tmp.path(), 0);
  CHECK(version.out.rfind("stepgate ", 0) == 0);
  CHECK(version.out.size() > std::string("stepgate \n").size());
  const CliResult help = expect_exit("--help", tmp.path(), 0);
  for (const char* command : {"run", "check", "report", "accept", "merge", "validate", "plan"})
    CHECK(help.out.find(command) != std::string::npos);
  // Subcommand help names the positional arguments as the usage line does, never as options.
  const CliResult run_help = expect_exit("run --help", tmp.path(), 0);
  CHECK(run_help.out.find("arguments:\n  SUITE ") != std::string::npos);
  CHECK(run_help.out.find("--suite") == std::string::npos);
  CHECK(run_help.out.find("no scope note") != std::string::npos);
  const CliResult merge_help = expect_exit("merge --help", tmp.path(), 0);
  CHECK(merge_help.out.find("  RESULTS... ") != std::string::npos);
  CHECK(merge_help.out.find("--results") == std::string::npos);
  const fs::path suite = e2e_suite("gate-small.json");
  const CliResult valid = expect_exit("validate " + quoted(suite.string()), tmp.path(), 0);
  CHECK(valid.out.find("valid suite 'e2e-gate-small'") != std::string::npos);
  CHECK(valid.out.find("5 cases") != std::string::npos);
  CHECK(valid.out.find(sha256sum(suite)) != std::string::npos);
  const CliResult plan = expect_exit("plan " + quoted(suite.string()), tmp.path(), 0);
  for (const char* id :
       {"line-ls/none/gd", "line-ls/std/gd", "bowl-20/none/gd", "bowl-20/none/hb-0.9", "churn-logit/std/gd"})
    CHECK(plan.out.find(id) != std::string::npos);
  CHECK(plan.out.find("5 cases") != std::string::npos);
  // Nothing of these wrote a file into the working directory (the captured output goes elsewhere).
  const fs::path work = tmp / "work";
  fs::create_directories(work);
  expect_exit("validate " + quoted(suite.string()), work, 0, tmp / "capture");
  expect_exit("plan " + quoted(suite.string()), work, 0, tmp / "capture");
  CHECK(fs::is_empty(work));
}
