// Command problems: the user's own training program behind the protocol (README, "Gating your
// own training code"). Each fault, produced by a tiny script in tests/e2e/trainers, gives the
// expected outcome and reason while the suite still finishes; no child is left behind.
#include <catch2/catch.hpp>
#include <dirent.h>
#include <fstream>

#include "e2e_fixtures.hpp"

using namespace stepgate;
using namespace stepgate::e2e;

namespace {

std::string trainer(const std::string& name) { return (source_dir() / "tests" / "e2e" / "trainers" / name).string(); }

json command_problem(const std::string& name, const std::string& script, json extra = json::object()) {
  json p = {{"name", name},
            {"kind", "command"},
            {"command", {{"argv", {"/usr/bin/python3", trainer(script), "--lr", "{rate}", "--seed", "{seed}",
                                   "--steps", "{budget}"}},
                         {"timeout", 20},
                         {"grace", 0.5}}},
            {"optimizers", {"gd"}}};
  for (auto& [k, v] : extra.items()) {
    if (k == "command")
      for (auto& [ck, cv] : v.items()) p["command"][ck] = cv;
    else
      p[k] = v;
  }
  return p;
}

json suite_of(const std::string& name, json problems, json defaults) {
  return {{"format", "stepgate.suite/1"}, {"name", name}, {"defaults", defaults}, {"problems", problems}};
}

// Processes whose command line is exactly `words` (read from /proc).
int processes_running(const std::vector<std::string>& words) {
  int found = 0;
  DIR* d = opendir("/proc");
  if (!d) return 0;
  while (dirent* e = readdir(d)) {
    if (e->d_name[0] < '0' || e->d_name[0] > '9') continue;
    std::ifstream in(std::string("/proc/") + e->d_name + "/cmdline", std::ios::binary);
    std::string cmd((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
    std::string want;
    for (const std::string& w : words) want += w + '\0';
    if (cmd == want) ++found;
  }
  closedir(d);
  return found;
}

const json& only_run(const json& results, const std::string& id) {
  const json& c = case_of(results, id);
  REQUIRE(c["runs"].size() == 1);
  return c["runs"][0];
}

}  // namespace

TEST_CASE("commands: every fault becomes a failed or diverged run with its reason", "[commands]") {
  TempDir dir("cmd-faults");
  const json fixed = {{"seeds", 1}, {"budget", 100}, {"rates", {{"grid", nullptr}, {"fixed", {0.5}}}}};
  json problems = json::array({
      command_problem("ok", "ok.py", {{"optimum", 0.0}}),
      command_problem("nonzero", "exit_nonzero.py"),
      command_problem("signal", "killed_by_signal.py"),
      command_problem("hang", "hang.py", {{"command", {{"timeout", 1.5}}}}),
      command_problem("noterm", "ignore_term.py", {{"optimum", 0.0}, {"command", {{"timeout", 1.5}}}}),
      command_problem("silent", "no_output.py"),
      command_problem("badjson", "bad_json.py"),
      command_problem("backwards", "iter_not_increasing.py"),
      command_problem("flood", "flood.py", {{"command", {{"max_output", 200000}}}}),
      command_problem("nan", "nan_cost.py"),
      command_problem("chatty", "log_lines.py", {{"optimum", 0.0}}),
  });
  write_json(dir / "faults.json", suite_of("faults", problems, fixed));
  const CliResult r = e2e::stepgate("run faults.json --out out --jobs 2 --quiet", dir.path());
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);  // the suite finishes; without a baseline nothing gates
  const json results = read_json(dir / "out" / "results.json");
  auto check = [&](const std::string& id, const char* outcome, const char* reason) {
    const json& run = only_run(results, id);
    INFO(id << ": " << run["reason"]);
    CHECK(run["outcome"] == outcome);
    CHECK(run["reason"].get<std::string>().find(reason) != std::string::npos);
  };
  check("ok/none/gd", "converged", "gap criterion");
  check("nonzero/none/gd", "failed", "exited with status 3");
  CHECK(only_run(results, "nonzero/none/gd")["stderr"] == "boom: disk on fire");  // the last lines of stderr
  check("signal/none/gd", "failed", "killed by signal 11");
  check("hang/none/gd", "failed", "timeout");
  check("noterm/none/gd", "failed", "timeout");
  check("silent/none/gd", "failed", "no output");
  check("badjson/none/gd", "failed", "protocol error at output line 2");
  check("backwards/none/gd", "failed", "does not increase");
  check("flood/none/gd", "failed", "size cap");
  check("nan/none/gd", "diverged", "non-finite");
  check("chatty/none/gd", "converged", "gap criterion");
  CHECK(only_run(results, "chatty/none/gd")["log_lines"].get<long>() > 10);
  CHECK(only_run(results, "ok/none/gd")["log_lines"] == 1);  // its "starting" line
  // ignore_term.py ignores SIGTERM and leaves `sleep 1000` in its group: both are gone.
  CHECK(processes_running({"sleep", "1000"}) == 0);
  // Theory says "not available" for command problems, never a made-up number.
  const json& theory = case_of(results, "ok/none/gd")["theory"];
  CHECK(theory["predicted_blowup"].is_null());
  CHECK(theory["L"].is_null());
  CHECK(theory["method"].get<std::string>().find("not available") != std::string::npos);
}

TEST_CASE("commands: serving mode gives the same runs as per-run mode, and --jobs changes nothing", "[commands]") {
  TempDir dir("cmd-serve");
  const json defaults = {{"seeds", 2}, {"budget", 300},
                         {"rates", {{"grid", {{"from", 0.001}, {"to", 10}, {"per_decade", 10}}}, {"precision", 0.01}}}};
  json per_run = command_problem("toy", "ok.py", {{"optimum", 0.0}, {"pinned", 0.5}});
  per_run["reference"] = {{"source", "exact minimiser of w^2/2"}, {"digits", 12},
                          {"coefficients", {{"w", 0.0}}}};
  json serving = per_run;
  serving["command"]["argv"] = {"/usr/bin/python3", trainer("ok.py"), "--serve"};
  serving["command"]["serve"] = true;
  write_json(dir / "per-run.json", suite_of("toy", json::array({per_run}), defaults));
  write_json(dir / "serving.json", suite_of("toy", json::array({serving}), defaults));
  const CliResult a = e2e::stepgate("run per-run.json --out a --jobs 1 --quiet", dir.path());
  const CliResult b = e2e::stepgate("run per-run.json --out b --jobs 2 --quiet", dir.path());
  const CliResult s = e2e::stepgate("run serving.json --out s --jobs 2 --quiet", dir.path());
  INFO(a.err << b.err << s.err);
  REQUIRE(a.exit_code == 0);
  REQUIRE(b.exit_code == 0);
  REQUIRE(s.exit_code == 0);
  report_time("commands: per-run mode, --jobs 1", a.seconds);
  report_time("commands: per-run mode, --jobs 2", b.seconds);
  report_time("commands: serving mode, --jobs 2", s.seconds);
  const json ja = read_json(dir / "a" / "results.json"), jb = read_json(dir / "b" / "results.json"),
             js = read_json(dir / "s" / "results.json");
  const json& ra = case_of(ja, "toy/none/gd");
  const json& rb = case_of(jb, "toy/none/gd");
  const json& rs = case_of(js, "toy/none/gd");
  REQUIRE(ra["runs"].size() >= 100);
  for (const json* other : {&rb, &rs}) {
    REQUIRE((*other)["runs"].size() == ra["runs"].size());
    for (std::size_t i = 0; i < ra["runs"].size(); ++i) {
      const json& x = ra["runs"][i];
      const json& y = (*other)["runs"][i];
      INFO("run " << i << " rate " << x["rate"]);
      CHECK(x["rate"] == y["rate"]);
      CHECK(x["outcome"] == y["outcome"]);
      CHECK(x["converged_at"] == y["converged_at"]);
      CHECK(x["trace"] == y["trace"]);
    }
    CHECK((*other)["summary"]["edge"] == ra["summary"]["edge"]);
  }
  // The params line of the best run against the exact minimiser w* = 0 (LRE of an absolute
  // error, capped at the reference's digits).
  REQUIRE(ra["summary"]["reference"].is_object());
  CHECK(ra["summary"]["reference"]["min_lre"].get<double>() >= 6.0);
  CHECK(rs["summary"]["reference"] == ra["summary"]["reference"]);
  // gd on J = w²/2 is stable below 2; with a budget of 300 the edge sits just below it.
  const double edge = ra["summary"]["edge"].get<double>();
  CHECK(edge < 2.0);
  CHECK(edge > 1.9);
}

TEST_CASE("commands: a data set produced by a command is hashed and recorded", "[commands]") {
  TempDir dir("cmd-produce");
  write_text(dir / "make_data.py",
             "import sys\nrows = int(sys.argv[1])\nwith open('made.csv', 'w') as f:\n"
             "    f.write('x,y\\n')\n    for i in range(rows): f.write(f'{i % 7},{(i % 7) * 2.0 + 1}\\n')\n");
  auto suite = [&](int rows) {
    return json{{"format", "stepgate.suite/1"},
                {"name", "produced"},
                {"datasets", {{"made", {{"csv", "made.csv"}, {"target", "y"},
                                        {"produce", {{"argv", {"/usr/bin/python3", "make_data.py", std::to_string(rows)}}}}}}}},
                {"defaults", {{"seeds", 1}, {"budget", 500}}},
                {"problems", {{{"name", "fit"}, {"kind", "least_squares"}, {"dataset", "made"}, {"optimizers", {"gd"}}}}}};
  };
  write_json(dir / "suite.json", suite(50));
  REQUIRE(e2e::stepgate("run suite.json --out a --quiet", dir.path()).exit_code == 0);
  const json a = read_json(dir / "a" / "results.json");
  const std::string first = a["datasets"][0]["sha256"];
  CHECK(first == sha256sum(dir / "made.csv"));
  CHECK(a["datasets"][0]["produce"]["argv"][2] == "50");
  CHECK(a["datasets"][0]["rows"] == 50);
  REQUIRE(e2e::stepgate("accept a/results.json --baseline base.json", dir.path()).exit_code == 0);
  // The pipeline changes: more rows. The gate shows it as data_changed with both hashes.
  write_json(dir / "suite.json", suite(60));
  const CliResult r = e2e::stepgate("run suite.json --out b --baseline base.json --quiet", dir.path());
  const json b = read_json(dir / "b" / "results.json");
  CHECK(b["datasets"][0]["sha256"] != first);
  CHECK(read_text(dir / "b" / "report.md").find("data_changed") != std::string::npos);
  // A produce command that fails is bad input: exit 2, naming the place and its stderr.
  write_text(dir / "make_data.py", "import sys\nsys.stderr.write('pipeline broke: no source table\\n')\nsys.exit(4)\n");
  std::filesystem::remove(dir / "made.csv");
  const CliResult bad = e2e::stepgate("run suite.json --out c --quiet", dir.path());
  CHECK(bad.exit_code == 2);
  CHECK(bad.err.find("#/datasets/made/produce") != std::string::npos);
  CHECK(bad.err.find("pipeline broke") != std::string::npos);
}

TEST_CASE("commands: bad command entries are exit 2 with the JSON pointer", "[commands]") {
  TempDir dir("cmd-bad");
  const json defaults = {{"seeds", 1}, {"budget", 60}};
  auto expect_bad = [&](json problem, const std::string& pointer, const std::string& words) {
    write_json(dir / "bad.json", suite_of("bad", json::array({problem}), defaults));
    const CliResult r = e2e::stepgate("validate bad.json", dir.path());
    INFO(r.out << r.err);
    CHECK(r.exit_code == 2);
    CHECK(r.err.find(pointer) != std::string::npos);
    CHECK(r.err.find(words) != std::string::npos);
  };
  json p = command_problem("t", "ok.py");
  p["command"]["argv"][3] = "{learning_rate}";
  expect_bad(p, "#/problems/0/command/argv/3", "unknown placeholder {learning_rate}");
  p = command_problem("t", "ok.py");
  p["command"]["argv"][3] = "{optimizer.momentum}";
  p["optimizers"] = {"momentum"};
  expect_bad(p, "#/problems/0/command/argv/3", "{optimizer.kind}, {optimizer.beta}");
  p = command_problem("t", "ok.py");
  p["command"]["argv"] = json::array();
  expect_bad(p, "#/problems/0/command/argv", "empty argv");
  p = command_problem("t", "ok.py");
  p["command"]["argv"] = "python3 train.py --lr {rate}";
  expect_bad(p, "#/problems/0/command/argv", "expected");
  p = command_problem("t", "ok.py", {{"command", {{"serve", true}}}});
  expect_bad(p, "#/problems/0/command/argv/3", "serving program");
  p = command_problem("t", "ok.py", {{"command", {{"cwd", "no/such/folder"}}}});
  expect_bad(p, "#/problems/0/command/cwd", "not a folder");
  p = command_problem("t", "ok.py", {{"command", {{"timeout", -1}}}});
  expect_bad(p, "#/problems/0/command/timeout", "seconds > 0");
  p = command_problem("t", "ok.py", {{"command", {{"env", {{"A", 1}}}}}});
  expect_bad(p, "#/problems/0/command/env/A", "a string");
  p = command_problem("t", "ok.py", {{"command", {{"shell", true}}}});
  expect_bad(p, "#/problems/0/command", "shell");
  p = command_problem("t", "ok.py", {{"dim", 3}});
  expect_bad(p, "#/problems/0", "dim");
  // A program that does not exist is found at validation (exit 2, its pointer), before any run;
  // so is a NUL inside an argument.
  p = command_problem("t", "ok.py");
  p["command"]["argv"] = {"/no/such/program", "--lr", "{rate}"};
  expect_bad(p, "#/problems/0/command/argv/0", "not an executable file");
  p["command"]["argv"] = {"no-such-program-on-path", "--lr", "{rate}"};
  expect_bad(p, "#/problems/0/command/argv/0", "not on PATH");
  p = command_problem("t", "ok.py");
  p["command"]["argv"][1] = std::string("ok.py\0--evil", 13);
  expect_bad(p, "#/problems/0/command/argv/1", "NUL");
  // A file that is not executable, likewise (the run-time failure to start, exit 3, is
  // tests/unit/test_command_parts.cpp's).
  const fs::path prog = dir.path() / "trainer.sh";
  { std::ofstream(prog) << "#!/bin/sh\nexit 0\n"; }
  fs::permissions(prog, fs::perms::owner_read | fs::perms::owner_write);
  p = command_problem("t", "ok.py");
  p["command"]["argv"] = {prog.string(), "--lr", "{rate}"};
  expect_bad(p, "#/problems/0/command/argv/0", "not an executable file");
}
