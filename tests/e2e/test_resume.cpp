// Journal and resume (docs/design.md, "Journal and resume"): a sweep killed at any point and
// resumed gives the results of an uninterrupted run; journals of something else are refused;
// Ctrl-C stops cleanly; the output folder is locked and written as a unit.
#include <signal.h>
#include <sys/wait.h>
#include <unistd.h>

#include <catch2/catch.hpp>
#include <chrono>
#include <thread>

#include "e2e_fixtures.hpp"

using namespace stepgate::e2e;

namespace {

fs::path resume_suite() { return e2e_suite("resume.json"); }

std::string run_args(const fs::path& suite, const fs::path& out, int jobs, bool resume) {
  return "run " + quoted(suite.string()) + " --out " + quoted(out.string()) + " --quiet --jobs " + std::to_string(jobs) +
         (resume ? " --resume" : "");
}

long journal_runs(const fs::path& dir) {
  const std::string text = read_text(dir / "journal.jsonl");
  return static_cast<long>(std::count(text.begin(), text.end(), '\n')) - 1;  // the header aside
}

// /bin/sh reports a child killed by SIGKILL as 137; a shell that exec'd it leaves the signal.
bool killed_by_sigkill(const CliResult& r) { return r.exit_code == 128 + SIGKILL || r.exit_code == -1; }

// results.json of one run as the comparisons see it: times, timings and host facts aside.
json comparable(const fs::path& dir) { return without_run_facts(read_json(dir / "results.json")); }

}  // namespace

TEST_CASE("resume: killed at 20 points and resumed, the results equal an uninterrupted run", "[e2e][resume]") {
  TempDir tmp("resume-kills");
  const fs::path whole = tmp.path() / "whole";
  expect_exit(run_args(resume_suite(), whole, 1, false), tmp.path(), 0);
  const json expected = comparable(whole);
  const long total = journal_runs(whole);
  REQUIRE(total > 100);

  int survived = 0;
  for (int i = 0; i < 20; ++i) {
    // Spread over the whole sweep; every other kill tears the line being written.
    const long at = std::max(1L, total * (2 * i + 1) / 40);
    const bool torn = i % 2 == 1;
    const fs::path out = tmp.path() / ("kill-" + std::to_string(i));
    const std::string kill = "STEPGATE_TEST_KILL_AFTER_RUNS=" + std::to_string(at) + (torn ? ":torn" : "") + " ";
    INFO("kill " << i << " after " << at << " runs" << (torn ? " (torn line)" : ""));
    const CliResult killed = run_command_line(kill + quoted(stepgate_binary()) + " " + run_args(resume_suite(), out, 1 + i % 2, false),
                                              tmp.path());
    CHECK(killed_by_sigkill(killed));
    CHECK_FALSE(fs::exists(out / "results.json"));  // nothing but the journal before the end
    CHECK(journal_runs(out) == (torn ? at - 1 : at));  // whole lines; a torn one has no newline
    if (i % 5 == 4) {
      // Killed again while resuming, then resumed once more.
      const CliResult again = run_command_line("STEPGATE_TEST_KILL_AFTER_RUNS=7:torn " + quoted(stepgate_binary()) + " " +
                                                   run_args(resume_suite(), out, 2, true),
                                               tmp.path());
      CHECK(killed_by_sigkill(again));
    }
    const CliResult resumed = expect_exit(run_args(resume_suite(), out, 2, true), tmp.path(), 0);
    const json got = comparable(out);
    CHECK(got == expected);
    if (got == expected) ++survived;
    // No staged file or other leftover in the folder.
    for (const auto& e : fs::directory_iterator(out))
      CHECK(e.path().filename().string().find("staged") == std::string::npos);
  }
  CHECK(survived == 20);
  std::printf("[e2e resume] %d of 20 kills survived (%ld runs in the sweep)\n", survived, total);
}

TEST_CASE("resume: a journal of another suite, suite file or tool build is refused", "[e2e][resume]") {
  TempDir tmp("resume-refused");
  const fs::path out = tmp.path() / "out";
  const fs::path suite = tmp.path() / "resume.json";
  write_text(suite, read_text(resume_suite()));
  const CliResult killed = run_command_line("STEPGATE_TEST_KILL_AFTER_RUNS=30 " + quoted(stepgate_binary()) + " " +
                                                run_args(suite, out, 1, false),
                                            tmp.path());
  REQUIRE(killed_by_sigkill(killed));
  const std::string journal = read_text(out / "journal.jsonl");

  SECTION("another suite") {
    const fs::path other = tmp.path() / "other.json";
    write_text(other, read_text(e2e_suite("gate-small.json")));
    const CliResult r = expect_exit(run_args(other, out, 1, true), tmp.path(), 2);
    CHECK_THAT(r.err, Catch::Contains("journal.jsonl") && Catch::Contains("belongs to the suite 'e2e-resume'"));
  }
  SECTION("the suite file changed") {
    write_text(suite, read_text(resume_suite()) + "\n");
    const CliResult r = expect_exit(run_args(suite, out, 1, true), tmp.path(), 2);
    CHECK_THAT(r.err, Catch::Contains("the suite file changed"));
  }
  SECTION("another tool build") {
    std::string edited = journal;
    const auto at = edited.find("\"tool\":\"");
    REQUIRE(at != std::string::npos);
    edited.insert(at + 8, "0.0.0-other ");
    write_text(out / "journal.jsonl", edited);
    const CliResult r = expect_exit(run_args(suite, out, 1, true), tmp.path(), 2);
    CHECK_THAT(r.err, Catch::Contains("another stepgate build"));
  }
  SECTION("a damaged line in the middle") {
    std::string edited = journal;
    const auto second = edited.find('\n') + 1;
    edited.replace(second, 5, "#####");
    write_text(out / "journal.jsonl", edited);
    const CliResult r = expect_exit(run_args(suite, out, 1, true), tmp.path(), 2);
    CHECK_THAT(r.err, Catch::Contains("journal.jsonl:2") && Catch::Contains("without --resume"));
  }
  // In every case the journal is left as it was (nothing lost) and no results were written.
  CHECK_FALSE(fs::exists(out / "results.json"));
  CHECK(fs::exists(out / "journal.jsonl"));
}

TEST_CASE("resume: without a journal it starts from the beginning and says so", "[e2e][resume]") {
  TempDir tmp("resume-none");
  const fs::path out = tmp.path() / "out";
  const CliResult r = expect_exit("run " + quoted(resume_suite().string()) + " --out " + quoted(out.string()) +
                                      " --resume --jobs 2",
                                  tmp.path(), 0);
  CHECK_THAT(r.err, Catch::Contains("nothing to resume"));
  CHECK(fs::exists(out / "results.json"));
}

TEST_CASE("resume: Ctrl-C stops between batches, keeps the journal and says how to resume", "[e2e][resume]") {
  TempDir tmp("resume-sigint");
  const fs::path out = tmp.path() / "out";
  const fs::path whole = tmp.path() / "whole";
  const fs::path suite = e2e_suite("gate-small.json");  // a few seconds: time to interrupt it
  const fs::path err = tmp.path() / "stderr.txt";
  const pid_t pid = ::fork();
  REQUIRE(pid >= 0);
  if (pid == 0) {
    std::freopen(err.c_str(), "w", stderr);
    std::freopen("/dev/null", "w", stdout);
    ::execl(stepgate_binary().c_str(), "stepgate", "run", suite.c_str(), "--out", out.c_str(), "--jobs", "2",
            static_cast<char*>(nullptr));
    std::_Exit(127);
  }
  // Wait for some runs in the journal, then interrupt.
  for (int i = 0; i < 400 && (!fs::exists(out / "journal.jsonl") || journal_runs(out) < 20); ++i)
    std::this_thread::sleep_for(std::chrono::milliseconds(10));
  ::kill(pid, SIGINT);
  int status = 0;
  ::waitpid(pid, &status, 0);
  REQUIRE(WIFEXITED(status));
  CHECK(WEXITSTATUS(status) == 130);
  const std::string said = read_text(err);
  INFO(said);
  CHECK_THAT(said, Catch::Contains("stopped:") && Catch::Contains("--resume") && Catch::Contains("journal.jsonl"));
  CHECK_FALSE(fs::exists(out / "results.json"));
  CHECK(journal_runs(out) >= 20);

  expect_exit(run_args(suite, out, 2, true), tmp.path(), 0);
  expect_exit(run_args(suite, whole, 2, false), tmp.path(), 0);
  CHECK(comparable(out) == comparable(whole));
}

TEST_CASE("outputs: a second run on the same folder is refused while the first holds it", "[e2e][outputs]") {
  TempDir tmp("outputs-lock");
  const fs::path out = tmp.path() / "out";
  const pid_t pid = ::fork();
  REQUIRE(pid >= 0);
  if (pid == 0) {
    std::freopen("/dev/null", "w", stderr);
    std::freopen("/dev/null", "w", stdout);
    ::execl(stepgate_binary().c_str(), "stepgate", "run", e2e_suite("gate-small.json").c_str(), "--out", out.c_str(),
            "--jobs", "1", "--quiet", static_cast<char*>(nullptr));
    std::_Exit(127);
  }
  for (int i = 0; i < 400 && !fs::exists(out / "journal.jsonl"); ++i)
    std::this_thread::sleep_for(std::chrono::milliseconds(10));
  const CliResult second = expect_exit(run_args(resume_suite(), out, 1, false), tmp.path(), 2);
  CHECK_THAT(second.err, Catch::Contains("another stepgate process is writing to this folder"));
  int status = 0;
  ::waitpid(pid, &status, 0);
  CHECK((WIFEXITED(status) && WEXITSTATUS(status) == 0));
  // The first run's outputs are its own, whole.
  CHECK(read_json(out / "results.json").at("suite").at("name") == "e2e-gate-small");
}

TEST_CASE("outputs: stale temporaries of killed runs are removed, an unusable --out fails before any run",
          "[e2e][outputs]") {
  TempDir tmp("outputs-stale");
  const fs::path out = tmp.path() / "out";
  write_text(out / ".results.json.staged-999999", "half");
  write_text(out / "report.html.tmp-999998", "half");
  write_text(out / "notes.txt", "the user's own file");
  expect_exit(run_args(resume_suite(), out, 2, false), tmp.path(), 0);
  CHECK_FALSE(fs::exists(out / ".results.json.staged-999999"));
  CHECK_FALSE(fs::exists(out / "report.html.tmp-999998"));
  CHECK(read_text(out / "notes.txt") == "the user's own file");

  write_text(tmp.path() / "a-file", "x");
  for (const std::string& bad : {(tmp.path() / "a-file").string(), (tmp.path() / "a-file" / "sub").string(),
                                 std::string("/proc/stepgate-out"), (tmp.path() / std::string(300, 'n')).string()}) {
    const CliResult r = expect_exit("run " + quoted(e2e_suite("gate-small.json").string()) + " --out " + quoted(bad),
                                    tmp.path(), 2);
    CHECK_THAT(r.err, Catch::Contains("--out"));
    CHECK(r.seconds < 2.0);  // found before the sweep (a sweep of this suite takes seconds)
  }
}
