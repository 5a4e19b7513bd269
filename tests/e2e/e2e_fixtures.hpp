// Shared fixtures of the end-to-end tests: runs that several tests read (the demo suite takes
// ~30 s per run on 2 cores, so each is run at most once per process and kept in a cache folder
// that is removed at exit), suite copies with edits, and small JSON and file helpers.
#pragma once
#include <catch2/catch.hpp>
#include <cstdio>
#include <iostream>
#include <map>
#include <nlohmann/json.hpp>
#include <string>

#include "cli_runner.hpp"

namespace stepgate::e2e {

using nlohmann::json;

inline fs::path demo_suite() { return source_dir() / "suites" / "demo.json"; }
inline fs::path e2e_suite(const std::string& name) { return source_dir() / "tests" / "e2e" / "suites" / name; }
inline fs::path plant_csv() { return source_dir() / "tests" / "e2e" / "data" / "plant.csv"; }

inline json read_json(const fs::path& path) {
  const std::string text = read_text(path);
  INFO("reading " << path);
  REQUIRE_FALSE(text.empty());
  return json::parse(text);
}

inline void write_json(const fs::path& path, const json& j) { write_text(path, j.dump(2) + "\n"); }

/// The case object with this id in a results.json (or a failing check when there is none).
inline const json& case_of(const json& results, const std::string& id) {
  for (const json& c : results.at("cases"))
    if (c.at("id") == id) return c;
  FAIL("no case " << id << " in results");
  static const json none;
  return none;
}

/// SHA-256 of a file by GNU coreutils' sha256sum: an outside reference for the tool's hashes.
inline std::string sha256sum(const fs::path& file) {
  TempDir scratch("sha");
  const CliResult r = run_command_line("sha256sum " + quoted(file.string()), scratch.path());
  REQUIRE(r.exit_code == 0);
  REQUIRE(r.out.size() >= 64);
  return r.out.substr(0, 64);
}

/// Prints how long a step took (the e2e suite must stay within its CI time).
inline void report_time(const std::string& what, double seconds) {
  std::cout << "[e2e time] " << what << ": " << seconds << " s" << std::endl;
}

/// Runs a CLI command and checks its exit code, printing the captured output on a mismatch.
inline CliResult expect_exit(const std::string& args, const fs::path& dir, int expected, fs::path capture_dir = {}) {
  const CliResult r = stepgate(args, dir, std::move(capture_dir));
  INFO("stepgate " << args << "\n--- stdout:\n" << r.out << "\n--- stderr:\n" << r.err);
  CHECK(r.exit_code == expected);
  return r;
}

/// A run kept for the whole process: its output folder and what the CLI said.
struct CachedRun {
  fs::path out;  ///< the --out folder (results.json, report.md, junit.xml, ...)
  CliResult cli;
  fs::path results() const { return out / "results.json"; }
};

/// The cache folder, removed when the process exits.
inline const TempDir& cache_dir() {
  static const TempDir dir("cache");
  return dir;
}

/// Runs `stepgate ARGS --out cache/NAME` once per process (the first caller pays).
inline const CachedRun& cached_run(const std::string& name, const std::string& args) {
  static std::map<std::string, CachedRun> runs;
  auto it = runs.find(name);
  if (it != runs.end()) return it->second;
  CachedRun r;
  r.out = cache_dir() / name;
  r.cli = stepgate(args + " --out " + quoted(r.out.string()), cache_dir().path(), cache_dir() / (name + "-capture"));
  report_time("stepgate " + args, r.cli.seconds);
  return runs.emplace(name, std::move(r)).first->second;
}

/// Accepts a cached run once: returns the baseline path (the record goes beside it).
inline fs::path cached_baseline(const std::string& name, const CachedRun& run) {
  static std::map<std::string, fs::path> baselines;
  auto it = baselines.find(name);
  if (it != baselines.end()) return it->second;
  const fs::path baseline = cache_dir() / (name + ".baseline.json"), record = cache_dir() / (name + ".md");
  const CliResult r = stepgate("accept " + quoted(run.results().string()) + " --baseline " + quoted(baseline.string()) +
                                   " --record " + quoted(record.string()),
                               cache_dir().path(), cache_dir() / (name + "-capture"));
  INFO("accept: " << r.out << r.err);
  REQUIRE(r.exit_code == 0);
  REQUIRE(fs::exists(baseline));
  REQUIRE(fs::exists(record));
  return baselines.emplace(name, baseline).first->second;
}

/// The demo suite, --jobs 2, with its summary table (not --quiet).
inline const CachedRun& demo_first() {
  return cached_run("demo-jobs2", "run " + quoted(demo_suite().string()) + " --jobs 2");
}
inline fs::path demo_baseline() { return cached_baseline("demo", demo_first()); }
/// The demo again, --jobs 1, gated against the baseline accepted from demo_first(), searched in
/// full (--full), so that its results can be compared with demo_first() case by case.
inline const CachedRun& demo_second() {
  const fs::path baseline = demo_baseline();
  return cached_run("demo-jobs1-gated", "run " + quoted(demo_suite().string()) + " --jobs 1 --quiet --full --baseline " +
                                            quoted(baseline.string()));
}
/// The demo gated against demo_baseline() in verify mode (the default with --baseline).
inline const CachedRun& demo_verified(int jobs) {
  const fs::path baseline = demo_baseline();
  return cached_run("demo-verified-jobs" + std::to_string(jobs), "run " + quoted(demo_suite().string()) + " --jobs " +
                                                                     std::to_string(jobs) + " --quiet --baseline " +
                                                                     quoted(baseline.string()));
}

inline const CachedRun& gate_small_first() {
  return cached_run("gate-small", "run " + quoted(e2e_suite("gate-small.json").string()) + " --quiet");
}
inline fs::path gate_small_baseline() { return cached_baseline("gate-small", gate_small_first()); }

inline const CachedRun& plant_first() {
  return cached_run("plant", "run " + quoted(e2e_suite("plant.json").string()) + " --quiet");
}
inline fs::path plant_baseline() { return cached_baseline("plant", plant_first()); }

/// Copies the plant suite into DIR/suites/plant.json (bytes as they are, or `edited` when
/// given) and the data into DIR/data/plant.csv (`csv_text` when given), keeping the suite's
/// relative data path valid. Returns the suite copy.
inline fs::path plant_copy(const fs::path& dir, const std::string& edited_suite = "",
                           const std::string& csv_text = "") {
  const fs::path suite = dir / "suites" / "plant.json";
  write_text(suite, edited_suite.empty() ? read_text(e2e_suite("plant.json")) : edited_suite);
  write_text(dir / "data" / "plant.csv", csv_text.empty() ? read_text(plant_csv()) : csv_text);
  return suite;
}

/// The plant suite as JSON, to edit.
inline json plant_suite_json() { return json::parse(read_text(e2e_suite("plant.json"))); }

/// The problem object named `name` in a suite.
inline json& problem_of(json& suite, const std::string& name) {
  for (json& p : suite.at("problems"))
    if (p.at("name") == name) return p;
  FAIL("no problem " << name);
  static json none;
  return none;
}

/// results.json without what may differ between two runs of the same suite (times, host).
inline json without_run_facts(json results) {
  results.erase("started");
  results.erase("finished");
  results.erase("host");
  results.erase("wall_seconds");
  for (json& c : results.at("cases")) {
    c.erase("wall_seconds");
    for (json& r : c.at("runs")) r.erase("wall_seconds");
  }
  return results;
}

/// Whether report.md (or a case's section of it) has a gate finding of this severity and rule.
inline bool has_finding(const std::string& report_md, const std::string& severity, const std::string& rule) {
  return report_md.find("- **" + severity + "** `" + rule + "`") != std::string::npos;
}

/// The per-case section of report.md ("#### fail: id" up to the next case); "" when absent.
inline std::string case_section(const std::string& report_md, const std::string& id) {
  const std::size_t at = report_md.find(": " + id + "\n");
  if (at == std::string::npos) return "";
  const std::size_t end = report_md.find("\n#### ", at);
  return report_md.substr(at, end == std::string::npos ? std::string::npos : end - at);
}

}  // namespace stepgate::e2e
