// What a command's trainer is told and what the user is told back (README, "Gating your own
// training code"): requests and placeholders carry exactly the fields of the optimizer's kind
// and its schedule; a trainer that dies with a Python exception shows the exception, its
// command line and the reason on the terminal (also under --quiet), in report.md and in
// junit.xml; a budget below confirm_min is refused before anything runs.
#include <catch2/catch.hpp>

#include <fstream>
#include <sstream>

#include "e2e_fixtures.hpp"

using namespace stepgate;
using namespace stepgate::e2e;

namespace {

std::string trainer(const std::string& name) { return (source_dir() / "tests" / "e2e" / "trainers" / name).string(); }

json suite_with(json optimizers, json problems, json defaults) {
  return {{"format", "stepgate.suite/1"}, {"name", "protocol"}, {"optimizers", optimizers},
          {"defaults", defaults}, {"problems", problems}};
}

std::vector<json> json_lines(const fs::path& file) {
  std::vector<json> out;
  std::ifstream in(file);
  for (std::string line; std::getline(in, line);)
    if (!line.empty()) out.push_back(json::parse(line));
  return out;
}

const json kOptimizers = {
    {"hb-warm", {{"kind", "momentum"}, {"beta", 0.8}, {"schedule", {{"kind", "cosine"}, {"warmup", 5}, {"floor", 0.1}}}}},
    {"adam-64", {{"kind", "adam"}, {"beta2", 0.99}, {"batch_size", 64}, {"schedule", {{"kind", "cosine"}, {"warmup", 5}}}}}};
const json kOneRate = {{"seeds", 1}, {"budget", 60}, {"rates", {{"grid", nullptr}, {"fixed", {0.5}}}}};

}  // namespace

TEST_CASE("trainer protocol: serving requests carry exactly the optimizer's and schedule's fields", "[commands]") {
  TempDir dir("protocol-serve");
  const std::string record = (dir.path() / "requests.jsonl").string();
  const json problem = {{"name", "net"},
                        {"kind", "command"},
                        {"command", {{"argv", {"/usr/bin/python3", trainer("record_request.py"), "--serve", "--record", record}},
                                     {"serve", true}, {"timeout", 20}, {"grace", 0.5}}},
                        {"optimum", 0.0},
                        {"optimizers", {"hb-warm", "adam-64"}}};
  write_json(dir / "suite.json", suite_with(kOptimizers, json::array({problem}), kOneRate));
  const CliResult r = e2e::stepgate("run suite.json --out out --jobs 1 --quiet", dir.path());
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
  std::vector<json> requests;
  for (const json& j : json_lines(record))
    if (j.contains("run")) requests.push_back(j);
  REQUIRE(requests.size() == 2);
  // One case per optimizer; in plan order (the optimizers as the problem lists them).
  json hb = requests[0]["optimizer"] == "hb-warm" ? requests[0] : requests[1];
  json adam = requests[0]["optimizer"] == "hb-warm" ? requests[1] : requests[0];
  hb.erase("run"), adam.erase("run");
  CHECK(hb == json::parse(R"({"rate": 0.5, "seed": 1, "budget": 60, "optimizer": "hb-warm", "kind": "momentum",
                              "beta": 0.8, "schedule": {"kind": "cosine", "floor": 0.1, "warmup": 5},
                              "scaling": "none"})"));
  CHECK(adam == json::parse(R"({"rate": 0.5, "seed": 1, "budget": 60, "optimizer": "adam-64", "kind": "adam",
                                "beta1": 0.9, "beta2": 0.99, "eps": 1e-08, "batch_size": 64,
                                "sampling": "epochs", "schedule": {"kind": "cosine", "floor": 0.0, "warmup": 5}, "scaling": "none"})"));
}

TEST_CASE("trainer protocol: placeholders expand to the kind's fields, and no {out} folder unless asked", "[commands]") {
  TempDir dir("protocol-argv");
  const std::string record = (dir.path() / "argv.jsonl").string();
  const json problem = {
      {"name", "net"},
      {"kind", "command"},
      {"command",
       {{"argv", {"/usr/bin/python3", trainer("record_request.py"), "--record", record, "--lr", "{rate}", "--steps",
                  "{budget}", "{optimizer}", "{optimizer.kind}", "{optimizer.beta2}", "{optimizer.batch_size}",
                  "{schedule.kind}", "{schedule.warmup}"}},
        {"timeout", 20}, {"grace", 0.5}}},
      {"optimum", 0.0},
      {"optimizers", {"adam-64"}}};
  write_json(dir / "suite.json", suite_with(kOptimizers, json::array({problem}), kOneRate));
  // stepgate's temporary folder (where {out} folders go) is the test's own.
  fs::create_directories(dir / "tmp");
  const CliResult r = run_command_line("TMPDIR=tmp " + quoted(stepgate_binary()) + " run suite.json --out out --jobs 1 --quiet",
                                       dir.path());
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
  const std::vector<json> argvs = json_lines(record);
  REQUIRE(argvs.size() == 1);
  CHECK(argvs[0] == json::parse(R"(["--record", ")" + record +
                                R"(", "--lr", "0.5", "--steps", "60", "adam-64", "adam", "0.99", "64", "cosine", "5"])"));
  // Nothing used {out}, so no run folder was made.
  CHECK(fs::is_empty(dir / "tmp"));
  // With {out} in argv each run gets one, removed after a run that did not fail.
  json with_out = problem;
  with_out["command"]["argv"].push_back("--out={out}");
  write_json(dir / "out-suite.json", suite_with(kOptimizers, json::array({with_out}), kOneRate));
  const CliResult o = run_command_line(
      "TMPDIR=tmp " + quoted(stepgate_binary()) + " run out-suite.json --out out2 --jobs 1 --quiet", dir.path());
  REQUIRE(o.exit_code == 0);
  const std::vector<json> again = json_lines(record);
  REQUIRE(again.size() == 2);
  CHECK(again[1].back().get<std::string>().find("--out=tmp/stepgate-run-") == 0);
  CHECK(fs::is_empty(dir / "tmp"));
}

TEST_CASE("trainer protocol: a Python exception is shown with its command on the terminal, in report.md and junit.xml",
          "[commands]") {
  TempDir dir("protocol-exception");
  const json problem = {{"name", "torchless"},
                        {"kind", "command"},
                        {"command", {{"argv", {"/usr/bin/python3", trainer("python_exception.py"), "--lr", "{rate}"}},
                                     {"timeout", 20}, {"grace", 0.5}}},
                        {"optimizers", {"hb-warm"}},
                        {"pinned", 0.5}};
  json defaults = kOneRate;
  defaults["seeds"] = 2;
  defaults["rates"]["fixed"] = {0.5, 0.05};
  write_json(dir / "suite.json", suite_with(kOptimizers, json::array({problem}), defaults));
  const CliResult r = e2e::stepgate("run suite.json --out out --jobs 2 --quiet", dir.path());
  INFO(r.out << r.err);
  CHECK(r.exit_code == 1);  // the pinned rate failed
  const std::string exception = "ModuleNotFoundError: No module named 'stepgate_test_module_that_is_not_installed'";
  const std::string command = "/usr/bin/python3 " + trainer("python_exception.py") + " --lr 0.5";
  // The terminal, under --quiet: one reason for all four runs, the first run's evidence.
  CHECK(r.out.find("runs that failed:\n  torchless/none/hb-warm:\n") != std::string::npos);
  CHECK(r.out.find("4 runs failed: the program exited with status 1") != std::string::npos);
  CHECK(r.out.find(exception) != std::string::npos);
  CHECK(r.out.find("command: " + command) != std::string::npos);
  CHECK(r.out.find("Traceback (most recent call last):") != std::string::npos);
  // report.md and junit.xml.
  const std::string md = read_text(dir / "out" / "report.md");
  CHECK(md.find("### Runs that failed") != std::string::npos);
  CHECK(md.find(exception) != std::string::npos);
  CHECK(md.find(command) != std::string::npos);
  const std::string xml = read_text(dir / "out" / "junit.xml");
  CHECK(xml.find("<system-err>Runs that failed:") != std::string::npos);
  CHECK(xml.find("No module named 'stepgate_test_module_that_is_not_installed'") != std::string::npos);
  CHECK(xml.find("&lt;module&gt;") != std::string::npos);  // the traceback's "<module>", escaped
  // results.json: the reason without the stderr, the evidence beside it.
  const json results = read_json(dir / "out" / "results.json");
  const json& c = case_of(results, "torchless/none/hb-warm");
  REQUIRE(c["failures"].size() == 1);
  CHECK(c["failures"][0]["runs"] == 4);
  CHECK(c["failures"][0]["first"]["stderr"].get<std::string>().find(exception) != std::string::npos);
  CHECK(c["runs"][0]["reason"] == "the program exited with status 1");
}

TEST_CASE("trainer protocol: a budget below confirm_min is refused by validate and run", "[commands]") {
  TempDir dir("protocol-budget");
  const json problem = {{"name", "net"},
                        {"kind", "command"},
                        {"command", {{"argv", {"/usr/bin/python3", trainer("ok.py"), "--lr", "{rate}"}}}},
                        {"optimizers", {"hb-warm"}}};
  json defaults = kOneRate;
  defaults["budget"] = 20;
  write_json(dir / "suite.json", suite_with(kOptimizers, json::array({problem}), defaults));
  for (const char* command : {"validate suite.json", "run suite.json --out out --quiet"}) {
    const CliResult r = e2e::stepgate(command, dir.path());
    INFO(command << ": " << r.out << r.err);
    CHECK(r.exit_code == 2);
    CHECK(r.err.find("suite.json#/defaults/budget") != std::string::npos);
    CHECK(r.err.find("budget 20 below outcome.confirm_min 50") != std::string::npos);
  }
  CHECK_FALSE(fs::exists(dir / "out" / "results.json"));
}
