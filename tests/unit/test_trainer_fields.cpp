// What a command's trainer is told (core/trainer_fields.hpp): exactly the fields of its
// optimizer's kind and schedule's kind, in the serving requests and the placeholders; the suite
// refuses a placeholder of a field the kind does not have, and a budget that cannot confirm any
// convergence; {out} folders exist only when argv uses {out}; why runs failed reaches the
// Results model and every report (README, "Gating your own training code").
#include <catch2/catch.hpp>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <optional>
#include <string>

#include <fmt/format.h>
#include <nlohmann/json.hpp>
#include <pugixml.hpp>

#include "stepgate/core/error.hpp"
#include "stepgate/core/placeholders.hpp"
#include "stepgate/core/results.hpp"
#include "stepgate/core/trainer_fields.hpp"
#include "stepgate/report/failures.hpp"
#include "stepgate/report/reporter.hpp"
#include "stepgate/run/command_runner.hpp"
#include "stepgate/suite/suite.hpp"

using namespace stepgate;
namespace fs = std::filesystem;
using Json = nlohmann::ordered_json;

namespace {

OptimizerSpec spec_of(OptimizerKind kind, const std::string& label) {
  OptimizerSpec s;
  s.kind = kind;
  s.label = label;
  return s;
}

Schedule cosine_with_warmup() {
  Schedule s;
  s.kind = ScheduleKind::cosine;
  s.floor = 0.05;
  s.warmup = 100;
  return s;
}

std::vector<std::string> keys_of(const Json& j) {
  std::vector<std::string> keys;
  for (const auto& [k, v] : j.items()) keys.push_back(k);
  return keys;
}

// A suite with one command problem; `argv`, the optimizers and settings as given.
Json command_suite(Json optimizers, Json problem_optimizers, Json argv, Json defaults = Json::object()) {
  Json s = {{"format", "stepgate.suite/1"}, {"name", "trainer-fields"}, {"optimizers", optimizers}};
  if (!defaults.empty()) s["defaults"] = defaults;
  s["problems"] = Json::array({{{"name", "net"},
                                {"kind", "command"},
                                {"command", {{"argv", argv}}},
                                {"optimizers", problem_optimizers}}});
  return s;
}

// The InputError of parsing `suite`, or nullopt when it parses.
std::optional<InputError> error_of(const Json& suite) {
  try {
    parse_suite(suite.dump(), "suite.json");
  } catch (const InputError& e) {
    return e;
  }
  return std::nullopt;
}

}  // namespace

TEST_CASE("trainer fields: each kind gets exactly its own parameters", "[commands]") {
  auto keys = [](const OptimizerSpec& s) {
    std::vector<std::string> out;
    for (const TrainerField& f : optimizer_trainer_fields(s)) out.push_back(f.key);
    return out;
  };
  using V = std::vector<std::string>;
  CHECK(keys(spec_of(OptimizerKind::gd, "gd")) == V{"kind"});
  CHECK(keys(spec_of(OptimizerKind::momentum, "hb")) == V{"kind", "beta"});
  CHECK(keys(spec_of(OptimizerKind::nesterov, "nag")) == V{"kind", "beta"});
  CHECK(keys(spec_of(OptimizerKind::adam, "adam")) == V{"kind", "beta1", "beta2", "eps"});
  CHECK(keys(spec_of(OptimizerKind::rmsprop, "rms")) == V{"kind", "rho", "eps"});
  CHECK(keys(spec_of(OptimizerKind::adagrad, "ada")) == V{"kind", "eps"});
  // batch_size only where the optimizer sets it, for any kind.
  OptimizerSpec hb = spec_of(OptimizerKind::momentum, "hb");
  hb.batch_size = 64;
  CHECK(keys(hb) == V{"kind", "beta", "batch_size", "sampling"});
  OptimizerSpec sgd = spec_of(OptimizerKind::sgd, "sgd");
  sgd.batch_size = 32;
  CHECK(keys(sgd) == V{"kind", "batch_size", "sampling"});
  // Real values, not defaults of other kinds.
  OptimizerSpec adam = spec_of(OptimizerKind::adam, "adam");
  adam.beta1 = 0.85, adam.beta2 = 0.99, adam.eps = 1e-6;
  const std::vector<TrainerField> f = optimizer_trainer_fields(adam);
  CHECK(f[0].value == "adam");
  CHECK(f[1].value.get<double>() == 0.85);
  CHECK(f[2].value.get<double>() == 0.99);
  CHECK(f[3].value.get<double>() == 1e-6);
  CHECK(f[0].value.is_string());
  CHECK(optimizer_trainer_fields(hb)[2].value.is_number_integer());
}

TEST_CASE("trainer fields: the schedule with its kind's parameters and the warm-up", "[commands]") {
  auto dump = [](const Schedule& s) {
    Json j;
    for (const TrainerField& f : schedule_trainer_fields(s)) j[f.key] = f.value;
    return j.dump();
  };
  CHECK(dump(Schedule{}) == R"({"kind":"constant","warmup":0})");
  CHECK(dump(cosine_with_warmup()) == R"({"kind":"cosine","floor":0.05,"warmup":100})");
  Schedule step;
  step.kind = ScheduleKind::step;
  step.factor = 0.5, step.every = 300;
  CHECK(dump(step) == R"({"kind":"step","factor":0.5,"every":300,"warmup":0})");
  Schedule inv;
  inv.kind = ScheduleKind::inverse_time;
  inv.decay = 0.01;
  CHECK(dump(inv) == R"({"kind":"inverse_time","decay":0.01,"warmup":0})");
}

TEST_CASE("trainer fields: the serving request, field by field and in order", "[commands]") {
  OptimizerSpec hb = spec_of(OptimizerKind::momentum, "hb-0.9");
  hb.schedule = cosine_with_warmup();
  CHECK(serving_request({7, 0.05, 2, 500}, hb, "std").dump() ==
        R"({"run":7,"rate":0.05,"seed":2,"budget":500,"optimizer":"hb-0.9","kind":"momentum","beta":0.9,)"
        R"("schedule":{"kind":"cosine","floor":0.05,"warmup":100},"scaling":"std"})");
  OptimizerSpec adam = spec_of(OptimizerKind::adam, "adam-warm");
  adam.schedule = cosine_with_warmup();
  adam.batch_size = 64;
  const Json q = serving_request({1, 0.001, 1, 3000}, adam, "none");
  CHECK(keys_of(q) == std::vector<std::string>{"run", "rate", "seed", "budget", "optimizer", "kind", "beta1", "beta2",
                                               "eps", "batch_size", "sampling", "schedule", "scaling"});
  CHECK(q["batch_size"] == 64);
  CHECK(q["eps"].get<double>() == 1e-8);
  CHECK_FALSE(q.contains("rho"));
  CHECK_FALSE(q.contains("beta"));
  // The momentum request has no field of another kind, and no batch_size it did not set.
  const Json m = serving_request({7, 0.05, 2, 500}, hb, "std");
  for (const char* absent : {"rho", "beta1", "beta2", "eps", "batch_size", "sampling"}) CHECK_FALSE(m.contains(absent));
}

TEST_CASE("trainer fields: placeholders name exactly the kind's fields", "[commands]") {
  OptimizerSpec hb = spec_of(OptimizerKind::momentum, "hb");
  hb.beta = 0.95;
  hb.schedule = cosine_with_warmup();
  const std::map<std::string, std::string> fields = trainer_placeholders(hb);
  CHECK(fields == std::map<std::string, std::string>{{"optimizer.kind", "momentum"},
                                                     {"optimizer.beta", "0.95"},
                                                     {"schedule.kind", "cosine"},
                                                     {"schedule.floor", "0.05"},
                                                     {"schedule.warmup", "100"}});
  const PlaceholderValues v{"0.1", "1", "500", "hb", "none", "net/none/hb", "", &fields};
  auto lookup = [&](std::string_view n) { return placeholder_value(n, v); };
  CHECK(expand_placeholders("--opt={optimizer} {optimizer.kind} b={optimizer.beta} w={schedule.warmup}", lookup) ==
        "--opt=hb momentum b=0.95 w=100");
  CHECK_THROWS_WITH(expand_placeholders("{optimizer.rho}", lookup), Catch::Contains("{optimizer.rho}"));
  CHECK_THROWS_WITH(expand_placeholders("{optimizer.batch_size}", lookup), Catch::Contains("batch_size"));
  OptimizerSpec sized = hb;
  sized.batch_size = 128;
  CHECK(trainer_placeholders(sized).at("optimizer.batch_size") == "128");
  CHECK(trainer_placeholders(sized).at("optimizer.sampling") == "epochs");  // the default, told as it is
  sized.sampling = BatchSampling::independent;
  CHECK(trainer_placeholders(sized).at("optimizer.sampling") == "independent");

  CHECK(uses_placeholder({"python3", "t.py", "--out", "{out}"}, "out"));
  CHECK(uses_placeholder({"python3", "--dir={out}/x"}, "out"));
  CHECK_FALSE(uses_placeholder({"python3", "t.py", "{{out}}", "{rate}"}, "out"));
  CHECK_FALSE(uses_placeholder({"python3", "{out"}, "out"));  // malformed: not a use
}

TEST_CASE("trainer fields: the suite refuses a placeholder of a field the kind does not have", "[commands][suite]") {
  const Json optimizers = {{"hb", {{"kind", "momentum"}, {"beta", 0.8}}},
                           {"adam-64", {{"kind", "adam"}, {"batch_size", 64},
                                        {"schedule", {{"kind", "cosine"}, {"warmup", 10}}}}}};
  const Json defaults = {{"budget", 200}};
  SECTION("{optimizer.rho} on momentum") {
    const auto e = error_of(command_suite(optimizers, {"hb"}, {"python3", "t.py", "--rho", "{optimizer.rho}"}, defaults));
    REQUIRE(e);
    CHECK(e->where() == "suite.json#/problems/0/command/argv/3");
    CHECK(e->message() ==
          "found {optimizer.rho}, a field that optimizer 'hb' (kind momentum) does not have; its fields: "
          "{optimizer.kind}, {optimizer.beta}");
  }
  SECTION("{optimizer.batch_size} where the optimizer sets none") {
    const auto e = error_of(command_suite(optimizers, {"adam-64", "hb"}, {"python3", "--bs={optimizer.batch_size}"}, defaults));
    REQUIRE(e);
    CHECK(e->where() == "suite.json#/problems/0/command/argv/1");
    CHECK(e->message().find("optimizer 'hb' (kind momentum)") != std::string::npos);
    CHECK(e->message().find("batch_size and sampling are fields only where the optimizer sets a batch_size") !=
          std::string::npos);
  }
  SECTION("{schedule.decay} on a cosine schedule") {
    const auto e = error_of(command_suite(optimizers, {"adam-64"}, {"python3", "{schedule.decay}"}, defaults));
    REQUIRE(e);
    CHECK(e->where() == "suite.json#/problems/0/command/argv/1");
    CHECK(e->message().find("{schedule.kind}, {schedule.floor}, {schedule.warmup}") != std::string::npos);
  }
  SECTION("the kind's own fields, and batch_size where set, are fine (batch_size on a command problem too)") {
    const Json s = command_suite(optimizers, {"adam-64"},
                                 {"python3", "{optimizer.kind}", "{optimizer.beta1}", "{optimizer.beta2}", "{optimizer.eps}",
                                  "{optimizer.batch_size}", "{schedule.kind}", "{schedule.floor}", "{schedule.warmup}"},
                                 defaults);
    CHECK_FALSE(error_of(s));
  }
}

TEST_CASE("trainer fields: a budget below confirm_min is refused, naming both", "[commands][suite]") {
  const Json optimizers = {{"hb", {{"kind", "momentum"}}}};
  const Json argv = {"python3", "t.py"};
  SECTION("at the budget's pointer") {
    const auto e = error_of(command_suite(optimizers, {"hb"}, argv, {{"budget", 30}}));
    REQUIRE(e);
    CHECK(e->where() == "suite.json#/defaults/budget");
    CHECK(e->message().find("budget 30 below outcome.confirm_min 50") != std::string::npos);
  }
  SECTION("at confirm_min's pointer when the budget is the default") {
    const auto e = error_of(command_suite(optimizers, {"hb"}, argv, {{"outcome", {{"confirm_min", 20000}}}}));
    REQUIRE(e);
    CHECK(e->where() == "suite.json#/defaults/outcome/confirm_min");
    CHECK(e->message().find("budget 10000 below outcome.confirm_min 20000") != std::string::npos);
  }
  SECTION("a problem's own budget") {
    Json s = command_suite(optimizers, {"hb"}, argv, {{"budget", 500}});
    s["problems"][0]["budget"] = 49;
    const auto e = error_of(s);
    REQUIRE(e);
    CHECK(e->where() == "suite.json#/problems/0/budget");
  }
  SECTION("equal, or a smaller confirm_min, is fine") {
    CHECK_FALSE(error_of(command_suite(optimizers, {"hb"}, argv, {{"budget", 50}})));
    CHECK_FALSE(error_of(command_suite(optimizers, {"hb"}, argv, {{"budget", 30}, {"outcome", {{"confirm_min", 30}}}})));
  }
}

namespace {

// Folders named stepgate-run-* in `dir`.
int run_folders(const fs::path& dir) {
  int n = 0;
  for (const auto& e : fs::directory_iterator(dir))
    if (e.path().filename().string().starts_with("stepgate-run-")) ++n;
  return n;
}

// Runs `argv` (per-run mode) at one rate with TMPDIR pointing at a fresh folder; returns the
// record and how many run folders are left there.
std::pair<RunRecord, int> run_with_tmpdir(const std::vector<std::string>& argv, const std::string& name) {
  const fs::path tmp = fs::path(STEPGATE_BINARY_DIR) / "test_trainer_fields_tmp" / name;
  fs::remove_all(tmp);
  fs::create_directories(tmp);
  const char* old = std::getenv("TMPDIR");
  const std::string saved = old ? old : "";
  ::setenv("TMPDIR", tmp.c_str(), 1);
  CommandCase c;
  c.case_id = "t/none/gd";
  c.scaling = "none";
  c.optimizer.label = "gd";
  c.spec.argv = argv;
  c.spec.timeout = 20;
  c.spec.grace = 0.2;
  RunSettings settings;
  settings.budget = 60;
  settings.outcome.probe = false;
  settings.outcome.confirm_factor = kCommandConfirmFactor;
  const double rates[] = {0.5};
  std::vector<RunRecord> records = run_commands(c, settings, rates, BatchSeed{42, 0, 1}, 1);
  if (old) ::setenv("TMPDIR", saved.c_str(), 1);
  else ::unsetenv("TMPDIR");
  return {records.at(0), run_folders(tmp)};
}

}  // namespace

TEST_CASE("trainer fields: {out} folders only when argv uses {out}, kept for a failed run", "[commands]") {
  if (!fs::exists("/usr/bin/python3")) {
    WARN("python3 unavailable");
    return;
  }
  const std::string ok = std::string(STEPGATE_SOURCE_DIR) + "/tests/e2e/trainers/ok.py";
  const std::string bad = std::string(STEPGATE_SOURCE_DIR) + "/tests/e2e/trainers/exit_nonzero.py";
  // The folder is made by stepgate before the program starts: ok.py ignores the extra argument.
  const auto [unused, left_unused] = run_with_tmpdir({"/usr/bin/python3", ok, "--lr", "{rate}", "--steps", "{budget}"}, "unused");
  CHECK(unused.outcome != Outcome::failed);
  CHECK(left_unused == 0);
  const auto [used, left_used] =
      run_with_tmpdir({"/usr/bin/python3", ok, "--lr", "{rate}", "--steps", "{budget}", "--out={out}"}, "used");
  CHECK(used.outcome != Outcome::failed);
  CHECK(left_used == 0);  // made, then removed after a run that did not fail
  const auto [failed, left_failed] =
      run_with_tmpdir({"/usr/bin/python3", bad, "--lr", "{rate}", "--steps", "{budget}", "--out={out}"}, "failed");
  CHECK(failed.outcome == Outcome::failed);
  CHECK(left_failed == 1);  // kept for the user, and named in the run's command
  REQUIRE(failed.command.size() == 7);
  CHECK(failed.command[6].find("/stepgate-run-") != std::string::npos);
  CHECK(failed.command[3] == "0.5");
  CHECK(failed.reason == "the program exited with status 3");
  CHECK(failed.stderr_tail == "boom: disk on fire");
  CHECK(failed.request.empty());
}

namespace {

RunRecord failed_run(double rate, long seed_index, const std::string& reason, const std::string& err) {
  RunRecord r;
  r.rate = rate;
  r.seed_index = seed_index;
  r.outcome = Outcome::failed;
  r.reason = reason;
  r.stderr_tail = err;
  r.command = {"/usr/bin/python3", "train.py", "--lr", fmt::format("{}", rate), "--note", "it's"};
  return r;
}

Results results_with_failures() {
  Results r;
  r.suite = {"fails", "fails.json", ""};
  CaseResult c;
  c.id = "net/none/hb";
  c.problem = "net";
  c.scaling = "none";
  c.problem_kind = "command";
  c.optimizer = spec_of(OptimizerKind::momentum, "hb");
  c.summary.seeds = {SeedSummary{}, SeedSummary{}};
  c.summary.seeds[0].seed = 11;
  c.summary.seeds[1].seed = 12;
  RunRecord good;
  good.rate = 0.01;
  good.outcome = Outcome::converged;
  good.iterations = 0;  // a converged run has converged_at
  good.reason = "cost criterion";
  c.runs.push_back({good, RunRole::grid});
  const std::string torch = "Traceback (most recent call last):\n  File \"train.py\", line 3, in <module>\n"
                            "ModuleNotFoundError: No module named 'torch' ``` <b>";
  c.runs.push_back({failed_run(0.1, 1, "the program exited with status 1", torch), RunRole::grid});
  c.runs.push_back({failed_run(0.2, 0, "the program exited with status 1", "other text"), RunRole::grid});
  c.runs.push_back({failed_run(0.3, 0, "timeout: no decision after 20 s (the process group was killed)", ""), RunRole::edge});
  r.cases.push_back(c);
  return r;
}

}  // namespace

TEST_CASE("failures: distinct reasons with the first run's evidence, in results.json and every report", "[commands][report]") {
  const Results results = results_with_failures();
  const std::vector<FailureReason> reasons = failure_reasons(results.cases[0]);
  REQUIRE(reasons.size() == 2);
  CHECK(reasons[0].reason == "the program exited with status 1");
  CHECK(reasons[0].runs == 2);
  CHECK(reasons[0].rate == 0.1);  // the first of the two
  CHECK(reasons[0].seed == 12);   // the suite's seed number, not the index
  CHECK(reasons[0].stderr_tail.find("No module named 'torch'") != std::string::npos);
  CHECK(reasons[1].runs == 1);
  CHECK(reasons[1].stderr_tail.empty());

  SECTION("results.json keeps each run's evidence and writes the summary") {
    const nlohmann::json j = to_json(results);
    const nlohmann::json& f = j["cases"][0]["failures"];
    REQUIRE(f.size() == 2);
    CHECK(f[0]["runs"] == 2);
    CHECK(f[0]["first"]["seed"] == 12);
    CHECK(f[0]["first"]["command"][1] == "train.py");
    CHECK(j["cases"][0]["runs"][0].contains("stderr") == false);  // only where there is some
    const Results back = results_from_json(j, "r.json");
    const RunRecord& again = back.cases[0].runs[1].record;
    CHECK(again.stderr_tail == results.cases[0].runs[1].record.stderr_tail);
    CHECK(again.command == results.cases[0].runs[1].record.command);
    CHECK(failure_reasons(back.cases[0]).size() == 2);
  }

  SECTION("terminal text: reason, count, first run, command line, stderr tail") {
    const std::string t = run_failures_text(results);
    CHECK(t.find("runs that failed:\n  net/none/hb:\n") == 0);
    CHECK(t.find("2 runs failed: the program exited with status 1") != std::string::npos);
    CHECK(t.find("first at rate 0.1, seed 12") != std::string::npos);
    CHECK(t.find("command: /usr/bin/python3 train.py --lr 0.1 --note 'it'\\''s'") != std::string::npos);
    CHECK(t.find("        ModuleNotFoundError: No module named 'torch'") != std::string::npos);
    CHECK(t.find("1 run failed: timeout") != std::string::npos);
    Results clean = results;
    clean.cases[0].runs.resize(1);
    CHECK(run_failures_text(clean).empty());
  }

  GateReport gate;
  Finding fail;
  fail.case_id = "net/none/hb";
  fail.rule = Rule::pinned_headroom;
  fail.severity = Severity::fail;
  fail.message = "pinned rate 0.1 is unsafe: failed for at least one seed";
  gate.findings.push_back(fail);
  gate.pass = false;
  gate.failures = 1;
  const ReportInput in{results, nullptr, gate};

  SECTION("report.md: a fenced block no line inside can close, stderr verbatim") {
    const std::string md = make_markdown_reporter()->render(in);
    const auto at = md.find("### Runs that failed\n\n#### net/none/hb\n\n````text\n");
    REQUIRE(at != std::string::npos);  // four backticks: the stderr holds a run of three
    CHECK(md.find("ModuleNotFoundError: No module named 'torch' ``` <b>", at) != std::string::npos);
    CHECK(md.find("\n````\n", at) != std::string::npos);
  }

  SECTION("junit.xml: in the failure's text and the case's system-err") {
    const std::string xml = make_junit_reporter()->render(in);
    pugi::xml_document doc;
    REQUIRE(doc.load_string(xml.c_str()));
    const pugi::xml_node tc = doc.child("testsuites").child("testsuite").child("testcase");
    const std::string failure = tc.child("failure").text().get();
    CHECK(failure.find("pinned rate 0.1 is unsafe") == 0);
    CHECK(failure.find("No module named 'torch' ``` <b>") != std::string::npos);
    CHECK(std::string(tc.child("failure").attribute("message").value()).find("torch") == std::string::npos);
    const std::string err = tc.child("system-err").text().get();
    CHECK(err.find("2 runs failed: the program exited with status 1") != std::string::npos);
    CHECK(err.find("command: /usr/bin/python3 train.py") != std::string::npos);
  }

  SECTION("report.html: escaped inside a pre block") {
    const std::string html = make_html_reporter()->render(in);
    CHECK(html.find("<h3>Runs that failed</h3>") != std::string::npos);
    CHECK(html.find("No module named &#39;torch&#39; ``` &lt;b&gt;") != std::string::npos);
    CHECK(html.find("<b>") == std::string::npos);
  }
}
