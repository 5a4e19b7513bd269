// The Markdown and JUnit reporters, the scope warning and the verification record, on
// hand-built results: one passing case, one failing case whose data changed (its id holds a
// pipe), and one case with a reference whose source holds XML markup characters.
#include <catch2/catch.hpp>
#include <map>
#include <unistd.h>

#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <set>
#include <string>
#include <vector>

#include <fmt/format.h>
#include <nlohmann/json.hpp>
#include <pugixml.hpp>

#include "stepgate/core/results.hpp"
#include "stepgate/gate/baseline.hpp"
#include "stepgate/gate/findings.hpp"
#include "stepgate/report/format.hpp"
#include "stepgate/report/html_escape.hpp"
#include "stepgate/report/record.hpp"
#include "stepgate/report/summary_table.hpp"
#include "stepgate/report/reporter.hpp"

using namespace stepgate;
namespace fs = std::filesystem;

namespace {

const std::string kPassId = "lin/none/gd";
const std::string kPipeId = "lin|pipe/standardize/hb-0.9";
const std::string kRefId = "nist<&\">/none/gd";
const std::string kRefSource = "NIST StRD \"Longley\" <certified> & more";

StoredRun timed_run(double rate, double seconds) {
  StoredRun s;
  s.record.rate = rate;
  s.record.outcome = Outcome::converged;
  s.record.wall_seconds = seconds;
  return s;
}

CaseResult make_case(const std::string& id, const std::string& dataset, const std::string& sha) {
  CaseResult c;
  c.id = id;
  c.problem = id.substr(0, id.find('/'));
  c.scaling = id.find("standardize") != std::string::npos ? "standardize" : "none";
  c.optimizer.kind = OptimizerKind::gd;
  c.dataset = dataset;
  c.data_sha256 = sha;
  CaseSummary& s = c.summary;
  s.floor = 0.01;
  s.edge = 0.5;
  s.edge_lo = 0.5;
  s.edge_hi = 0.505;
  s.best_rate = 0.2;
  s.best_iterations = 40;
  s.edge_spread = 1.0;
  s.precision = 0.01;
  return c;
}

Results sample_results() {
  Results r;
  r.suite = {"demo", "suites/demo.json", std::string(64, 'e')};
  r.tool = {"9.8.7", "GCC 12.2.0", "Release, Eigen 3.4.0"};
  r.host = {"Linux 6.1", "x86_64", "box", 8, 2, ""};
  r.started = "2026-01-02T03:04:05Z";
  r.wall_seconds = 1.25;  // the run's own elapsed time: cases side by side, plus preparation

  CaseResult pass = make_case(kPassId, "lin-data", std::string(64, 'a'));
  pass.summary.pinned = 0.25;
  pass.summary.headroom = 2.0;
  pass.summary.pinned_iterations = 100;
  pass.summary.pinned_outcome = Outcome::converged;
  pass.runs = {timed_run(0.1, 0.25), timed_run(0.2, 0.5)};
  pass.wall_seconds = 0.5;  // its two lanes ran together: the case took as long as the longer

  CaseResult moved = make_case(kPipeId, "lin-data", std::string(64, 'c'));  // was 'b' in the baseline
  moved.optimizer.kind = OptimizerKind::momentum;
  moved.optimizer.label = "hb-0.9";
  moved.summary.edge = 0.25;  // halved: edge_moved fails
  moved.summary.edge_lo = 0.25;
  moved.summary.edge_hi = 0.2525;
  moved.runs = {timed_run(0.1, 1.0)};
  moved.wall_seconds = 1.0;

  CaseResult ref = make_case(kRefId, "longley", std::string(64, 'd'));
  ReferenceSummary rs;
  rs.min_lre = 4.2;  // below the required 6 digits: min_lre fails
  rs.source = kRefSource;
  ref.summary.reference = rs;

  r.cases = {pass, moved, ref};
  return r;
}

// The accepted picture: the same as the results but for the second case's edge and data.
Baseline sample_baseline(const Results& r) {
  Baseline b;
  b.suite = r.suite;
  b.tool = r.tool;
  b.host = r.host;
  b.accepted = "2026-01-01T00:00:00Z";
  for (const CaseResult& c : r.cases) {
    BaselineCase x;
    x.id = c.id;
    x.data_sha256 = c.data_sha256;
    x.floor = c.summary.floor;
    x.edge = c.summary.edge;
    x.edge_lo = c.summary.edge_lo;
    x.edge_hi = c.summary.edge_hi;
    x.best_rate = c.summary.best_rate;
    x.pinned = c.summary.pinned;
    x.pinned_iterations = c.summary.pinned_iterations;
    x.headroom = c.summary.headroom;
    x.edge_spread = 1.0;
    x.precision = 0.01;
    if (c.summary.reference) x.min_lre = c.summary.reference->min_lre;
    b.cases.push_back(x);
  }
  b.cases[1].edge = 0.5;
  b.cases[1].edge_lo = 0.5;
  b.cases[1].edge_hi = 0.505;
  b.cases[1].data_sha256 = std::string(64, 'b');
  return b;
}

std::string section(const std::string& text, const std::string& from, const std::string& to) {
  const auto a = text.find(from);
  REQUIRE(a != std::string::npos);
  const auto b = text.find(to, a);
  return text.substr(a, b == std::string::npos ? std::string::npos : b - a);
}

std::vector<std::string> lines_of(const std::string& text) {
  std::vector<std::string> out;
  std::size_t at = 0;
  while (at < text.size()) {
    const auto nl = text.find('\n', at);
    out.push_back(text.substr(at, nl == std::string::npos ? std::string::npos : nl - at));
    if (nl == std::string::npos) break;
    at = nl + 1;
  }
  return out;
}

// Pipes that split cells (not preceded by a backslash).
int cell_pipes(const std::string& row) {
  int n = 0;
  for (std::size_t i = 0; i < row.size(); ++i) n += row[i] == '|' && (i == 0 || row[i - 1] != '\\');
  return n;
}

// How the reports write a suite string (README: names are inert Markdown): & < > as references,
// and the characters Markdown reads as syntax mid-line backslash-escaped, | among them.
std::string md_text(const std::string& s) {
  std::string out;
  for (char ch : s) {
    if (ch == '&') out += "&amp;";
    else if (ch == '<') out += "&lt;";
    else if (ch == '>') out += "&gt;";
    else if (std::string_view("\\`*_[]~|").find(ch) != std::string_view::npos) out += '\\', out += ch;
    else out += ch;
  }
  return out;
}
std::string escaped_cell(const std::string& s) { return md_text(s); }

std::string render(const Reporter& rep, const Results& r, const Baseline* b, const GateReport& g) {
  return rep.render(ReportInput{r, b, g});
}

std::string run_command(const std::string& cmd) {
  std::string out;
  FILE* p = ::popen(cmd.c_str(), "r");
  REQUIRE(p != nullptr);
  char buf[4096];
  while (std::size_t n = std::fread(buf, 1, sizeof buf, p)) out.append(buf, n);
  REQUIRE(::pclose(p) == 0);
  return out;
}

}  // namespace

TEST_CASE("reports: the reporters and their files", "[reports]") {
  const auto all = all_reporters();
  REQUIRE(all.size() == 3);
  CHECK(all[0]->format() == "markdown");
  CHECK(all[0]->file_name() == "report.md");
  CHECK(all[1]->format() == "html");
  CHECK(all[2]->format() == "junit");
  CHECK(all[2]->file_name() == "junit.xml");
}

TEST_CASE("reports: the scope warning says a training program's data is its own", "[reports]") {
  Results r;
  CaseResult c;
  c.id = "churn-net/none/hb-0.9";
  c.problem = "churn-net";
  c.problem_kind = "command";
  c.scaling = "none";
  r.cases.push_back(c);
  const std::string w = scope_warning(r);
  CHECK(w.find("the training programs churn-net as they ran here") != std::string::npos);
  CHECK(w.find("problems without data") == std::string::npos);  // it has data, just not stepgate's
}

TEST_CASE("reports: the scope warning names the data with their hashes, the scalings and optimizers", "[reports]") {
  const Results r = sample_results();
  const std::string w = scope_warning(r);
  CHECK(w.find("verified only on") != std::string::npos);
  CHECK(w.find("not verified for any other data") != std::string::npos);
  for (const CaseResult& c : r.cases) {
    CHECK(w.find(c.dataset + " (sha256 " + c.data_sha256.substr(0, 12) + ")") != std::string::npos);
    CHECK(w.find(c.scaling) != std::string::npos);
    CHECK(w.find(c.optimizer.name()) != std::string::npos);
  }
  // lin-data appears with two hashes: a changed file is a different data set.
  CHECK(w.find("lin-data (sha256 aaaaaaaaaaaa)") != std::string::npos);
  CHECK(w.find("lin-data (sha256 cccccccccccc)") != std::string::npos);
  CHECK(w.find('\n') == std::string::npos);
}

TEST_CASE("reports: Markdown puts the verdict first and details only warn and fail cases", "[reports]") {
  const Results r = sample_results();
  const Baseline b = sample_baseline(r);
  const GateReport g = apply_gate(r, &b);
  REQUIRE_FALSE(g.pass);
  const std::string md = render(*make_markdown_reporter(), r, &b, g);

  const auto lines = lines_of(md);
  REQUIRE(!lines.empty());
  CHECK(lines[0] == "**verdict: fail — 3 cases: 2 failing, 0 with warnings, 1 passing**; suite demo (sha256 eeeeeeeeeeee…)");

  const std::string details = section(md, "### Cases with findings", "### All cases");
  CHECK(details.find(kPassId) == std::string::npos);
  CHECK(details.find("#### fail: " + md_text(kPipeId)) != std::string::npos);
  CHECK(details.find("#### fail: " + md_text(kRefId)) != std::string::npos);
  // Every warn and fail finding appears with its severity, rule and message; data both hashes.
  for (const Finding& f : g.findings) {
    const std::string line = "- **" + std::string(to_string(f.severity)) + "** `" + std::string(to_string(f.rule)) + "`: " + md_text(f.message);
    CHECK((details.find(line) != std::string::npos) == (f.severity != Severity::pass));
  }
  const std::string moved = section(details, "#### fail: " + md_text(kPipeId), "#### fail: " + md_text(kRefId));
  CHECK(moved.find("data sha256 baseline: `" + std::string(64, 'b') + "`") != std::string::npos);
  CHECK(moved.find("data sha256 current:  `" + std::string(64, 'c') + "`") != std::string::npos);
  CHECK(moved.find("| edge [bracket] | 0.5 [0.5, 0.505] | 0.25 [0.25, 0.2525] |") != std::string::npos);
  CHECK(moved.find("| pinned | – | – |") != std::string::npos);  // NaN shows as an en dash

  const std::string table = section(md, "### All cases", "**Scope.**");
  for (const CaseResult& c : r.cases) CHECK(table.find("| " + escaped_cell(c.id) + " |") != std::string::npos);
  CHECK(table.find("lin\\|pipe/standardize/hb-0.9") != std::string::npos);
  for (const std::string& row : lines_of(table))
    if (!row.empty() && row[0] == '|') CHECK(cell_pipes(row) == 9);
  for (const std::string& row : lines_of(details))
    if (!row.empty() && row[0] == '|') CHECK(cell_pipes(row) == 4);
  CHECK(md.find("**Scope.** " + md_text(scope_warning(r))) != std::string::npos);
  // No raw markup from the suite: the id and source with < and & appear only as references.
  CHECK(md.find(kRefId) == std::string::npos);
  CHECK(md.find(md_text(kRefSource)) != std::string::npos);
}

TEST_CASE("reports: Markdown without a baseline uses the baseline-free rules and dashes", "[reports]") {
  const Results r = sample_results();
  const GateReport g = apply_gate(r, nullptr);
  const std::string md = render(*make_markdown_reporter(), r, nullptr, g);
  CHECK(md.rfind(g.pass ? "**verdict: pass — " : "**verdict: fail — ", 0) == 0);
  CHECK(md.find("no baseline: only the rules that need none were applied (pinned_headroom, min_lre and theory") !=
        std::string::npos);
  const std::string details = section(md, "### Cases with findings", "### All cases");
  CHECK(details.find("#### fail: " + md_text(kRefId)) != std::string::npos);
  CHECK(details.find(kPipeId) == std::string::npos);  // its edge move needs a baseline
  CHECK(details.find("| floor | – | 0.01 |") != std::string::npos);
  CHECK(details.find("| edge [bracket] | – | 0.5 [0.5, 0.505] |") != std::string::npos);
}

TEST_CASE("reports: JUnit counts and messages, read by pugixml and by Python's ElementTree", "[reports]") {
  const Results r = sample_results();
  const Baseline b = sample_baseline(r);
  const GateReport g = apply_gate(r, &b);
  const std::string xml = render(*make_junit_reporter(), r, &b, g);
  CHECK(xml == render(*make_junit_reporter(), r, &b, g));  // deterministic

  pugi::xml_document doc;
  REQUIRE(doc.load_string(xml.c_str()));
  const pugi::xml_node root = doc.child("testsuites");
  CHECK(std::string(root.attribute("name").value()) == "stepgate");
  const pugi::xml_node suite = root.child("testsuite");
  CHECK(std::string(suite.attribute("name").value()) == r.suite.name);
  const int findings = static_cast<int>(g.findings.size());
  for (const pugi::xml_node n : {root, suite}) {
    CHECK(n.attribute("tests").as_int() == findings);
    CHECK(n.attribute("failures").as_int() == g.failures);
    CHECK(n.attribute("errors").as_int() == 0);
    CHECK(n.attribute("skipped").as_int() == 0);
    CHECK(n.attribute("time").as_double() == Approx(1.25));  // the run's time, not a sum of lanes
  }
  // Each case's own time, on its first testcase; the case without a time gets 0.
  std::map<std::string, double> first_time;
  for (const pugi::xml_node tc : suite.children("testcase"))
    first_time.emplace(tc.attribute("classname").value(), tc.attribute("time").as_double());
  CHECK(first_time.at(kPassId) == Approx(0.5));
  CHECK(first_time.at(kPipeId) == Approx(1.0));
  CHECK(first_time.at(kRefId) == 0.0);
  const pugi::xml_node accepted = suite.child("properties").find_child_by_attribute("property", "name", "baseline_accepted");
  REQUIRE(accepted);
  CHECK(std::string(accepted.attribute("value").value()) == b.accepted);
  CHECK_FALSE(suite.child("properties").find_child_by_attribute("property", "name", "baseline"));
  std::size_t i = 0;
  for (const pugi::xml_node tc : suite.children("testcase")) {
    REQUIRE(i < g.findings.size());
    const Finding& f = g.findings[i++];
    CHECK(std::string(tc.attribute("classname").value()) == f.case_id);
    CHECK(std::string(tc.attribute("name").value()) == to_string(f.rule));
    const pugi::xml_node failure = tc.child("failure");
    CHECK(bool(failure) == (f.severity == Severity::fail));
    if (failure) {
      CHECK(std::string(failure.attribute("message").value()) == f.message);
      CHECK(std::string(failure.attribute("type").value()) == to_string(f.rule));
      CHECK(std::string(failure.text().get()) == f.message);
    }
    CHECK(bool(tc.child("system-out")) == (f.severity == Severity::warn));
    if (f.severity == Severity::warn) CHECK(std::string(tc.child("system-out").text().get()) == "warning: " + f.message);
  }
  CHECK(i == g.findings.size());
  // The id and source with < & " > survive the round trip (pugixml escaped them).
  CHECK(suite.find_child_by_attribute("testcase", "classname", kRefId.c_str()));
  CHECK(xml.find(kRefSource) == std::string::npos);

  // Outside parser: Python 3.11's xml.etree.ElementTree (Debian 12 /usr/bin/python3).
  const fs::path file = fs::temp_directory_path() / ("stepgate_junit_" + std::to_string(::getpid()) + ".xml");
  std::ofstream(file) << xml;
  const std::string script =
      "import json,sys,xml.etree.ElementTree as E\n"
      "root=E.parse(sys.argv[1]).getroot()\n"
      "s=root.find(\"testsuite\")\n"
      "counts=lambda n:[n.get(k) for k in (\"tests\",\"failures\",\"errors\",\"skipped\")]\n"
      "cases=[[c.get(\"classname\"),c.get(\"name\"),[f.get(\"message\") for f in c.findall(\"failure\")],"
      "[f.text for f in c.findall(\"failure\")]] for c in s.findall(\"testcase\")]\n"
      "print(json.dumps({\"root\":root.tag,\"name\":root.get(\"name\"),\"suite\":s.get(\"name\"),"
      "\"rc\":counts(root),\"sc\":counts(s),\"cases\":cases}))\n";
  const std::string out = run_command("/usr/bin/python3 -c '" + script + "' " + file.string());
  fs::remove(file);
  const nlohmann::json j = nlohmann::json::parse(out);
  CHECK(j["root"] == "testsuites");
  CHECK(j["name"] == "stepgate");
  CHECK(j["suite"] == r.suite.name);
  const std::vector<std::string> counts = {std::to_string(findings), std::to_string(g.failures), "0", "0"};
  CHECK(j["rc"].get<std::vector<std::string>>() == counts);
  CHECK(j["sc"].get<std::vector<std::string>>() == counts);
  REQUIRE(j["cases"].size() == g.findings.size());
  for (std::size_t k = 0; k < g.findings.size(); ++k) {
    const Finding& f = g.findings[k];
    const auto& c = j["cases"][k];
    CHECK(c[0] == f.case_id);
    CHECK(c[1] == std::string(to_string(f.rule)));
    CHECK(c[2].size() == (f.severity == Severity::fail ? 1u : 0u));
    if (f.severity == Severity::fail) {
      CHECK(c[2][0] == f.message);
      CHECK(c[3][0] == f.message);
    }
  }
  // The reference failure's message holds the source with its markup characters.
  bool saw_source = false;
  for (const auto& c : j["cases"])
    for (const auto& m : c[2]) saw_source = saw_source || m.get<std::string>().find(kRefSource) != std::string::npos;
  CHECK(saw_source);
}

TEST_CASE("reports: JUnit marks a case that could not be run as an error, one without rules as skipped", "[reports]") {
  Results r = sample_results();
  CaseResult broken = make_case("broken/none/gd", "", "");
  broken.error = "cannot read data \"x.csv\":\nline 2 <bad> & worse";  // newline and markup in an attribute
  CaseResult bare = make_case("bare/none/gd", "", "");
  r.cases.push_back(broken);
  r.cases.push_back(bare);
  const GateReport g = apply_gate(r, nullptr);
  pugi::xml_document doc;
  REQUIRE(doc.load_string(render(*make_junit_reporter(), r, nullptr, g).c_str()));
  const pugi::xml_node suite = doc.child("testsuites").child("testsuite");
  int without_findings = 0;  // without a baseline: the data-changed case and "bare"
  for (const CaseResult& c : r.cases) without_findings += g.of_case(c.id).empty();
  REQUIRE(without_findings == 2);
  CHECK(suite.attribute("errors").as_int() == 1);
  CHECK(suite.attribute("skipped").as_int() == without_findings);
  CHECK(suite.attribute("failures").as_int() == g.failures - 1);  // the not-run case is an error instead
  CHECK(suite.attribute("tests").as_int() == static_cast<int>(g.findings.size()) + without_findings);
  const pugi::xml_node error = suite.find_child_by_attribute("testcase", "classname", "broken/none/gd").child("error");
  REQUIRE(error);
  CHECK(std::string(error.attribute("message").value()) == "could not be run: " + broken.error);
  const pugi::xml_node skipped = suite.find_child_by_attribute("testcase", "classname", "bare/none/gd");
  CHECK(std::string(skipped.attribute("name").value()) == "no_rule_applied");
  CHECK(skipped.child("skipped"));
}

TEST_CASE("reports: the record starts with a title and keeps older entries as they were", "[reports]") {
  const Results r = sample_results();
  Baseline b1 = sample_baseline(r);
  const std::string e1 = render_record_entry(r, b1);
  // The entry names the suite hash, the tool version, every case's data hash and the rates.
  CHECK(e1.find(r.suite.sha256) != std::string::npos);
  CHECK(e1.find("stepgate " + r.tool.version) != std::string::npos);
  for (const BaselineCase& c : b1.cases) {
    CHECK(e1.find("`" + c.data_sha256 + "`") != std::string::npos);  // the accepted data, in full
    CHECK(e1.find("| " + escaped_cell(c.id) + " |") != std::string::npos);
  }
  CHECK(e1.find("0.5 [0.5, 0.505]") != std::string::npos);
  CHECK(e1.find("4.2 (" + md_text(kRefSource) + ")") != std::string::npos);
  CHECK(e1.find(md_text(scope_warning(r))) != std::string::npos);
  CHECK(e1.find(b1.accepted) != std::string::npos);

  const std::string rec1 = append_record("", "demo", e1);
  CHECK(rec1.rfind("# Verification record: demo\n\n", 0) == 0);
  const auto history = rec1.find("\n## History\n\n");
  REQUIRE(history != std::string::npos);
  CHECK(rec1.substr(history + std::string("\n## History\n\n").size()) == e1);

  Baseline b2 = b1;
  b2.accepted = "2026-02-01T00:00:00Z";
  b2.tool.version = "9.9.0";
  const std::string e2 = render_record_entry(r, b2);
  const std::string rec2 = append_record(rec1, "demo", e2);
  CHECK(rec2.substr(0, history + 13) == rec1.substr(0, history + 13));  // title, paragraph, heading
  const auto at1 = rec2.find(e1), at2 = rec2.find(e2);
  REQUIRE(at1 != std::string::npos);
  REQUIRE(at2 != std::string::npos);
  CHECK(at2 < at1);  // newest first
  CHECK(rec2.substr(at1) == e1);  // the first entry, byte for byte, still at the end
  CHECK(rec2.find("9.9.0") != std::string::npos);

  Baseline b3 = b1;
  b3.accepted = "2026-03-01T00:00:00Z";
  const std::string e3 = render_record_entry(r, b3);
  const std::string rec3 = append_record(rec2, "demo", e3);
  CHECK(rec3.find(e3) < rec3.find(e2));
  CHECK(rec3.substr(rec3.find(e2)) == rec2.substr(at2));  // both older entries untouched
}

TEST_CASE("reports: a record without a history heading gets one, its text kept", "[reports]") {
  const std::string old = "# Notes kept by hand\n\nSome text.";
  const std::string rec = append_record(old, "demo", "### entry\n");
  CHECK(rec.rfind(old, 0) == 0);
  CHECK(rec.find("\n## History\n\n### entry\n") != std::string::npos);
}

TEST_CASE("reports: the terminal, report.md and report.html count the same things in the same words", "[reports]") {
  const Results r = sample_results();
  const Baseline b = sample_baseline(r);
  for (const Baseline* base : {&b, static_cast<const Baseline*>(nullptr)}) {
    const GateReport g = apply_gate(r, base);
    const std::string line = count_line(g, r);
    INFO(line);
    CHECK(line.rfind(g.pass ? "verdict: pass — 3 cases: " : "verdict: fail — 3 cases: ", 0) == 0);
    CHECK(findings_text(g, r).find(line + "\n") != std::string::npos);
    CHECK(render(*make_markdown_reporter(), r, base, g).find("**" + line + "**") != std::string::npos);
    CHECK(render(*make_html_reporter(), r, base, g).find(html_escape(line)) != std::string::npos);
    // The counts add up to the cases, each case counted once by its worst finding.
    int failing = 0, warning = 0, passing = 0;
    for (const CaseResult& c : r.cases) {
      const auto w = g.worst(c.id);
      failing += w == Severity::fail;
      warning += w == Severity::warn;
      passing += !w || *w == Severity::pass;
    }
    CHECK(line.find(fmt::format("{} failing, {} with warnings, {} passing", failing, warning, passing)) != std::string::npos);
    if (!base) CHECK(findings_text(g, r).find(baseline_free_note()) != std::string::npos);
  }
  // The headings are the same list in the terminal table, report.md and report.html.
  const GateReport g = apply_gate(r, &b);
  const std::string terminal = summary_table(r, g);
  const std::string md = render(*make_markdown_reporter(), r, &b, g);
  const std::string html = render(*make_html_reporter(), r, &b, g);
  std::string md_head = "|", html_head;
  for (std::string_view h : kSummaryHeadings) {
    CHECK(terminal.substr(0, terminal.find('\n')).find(std::string(h)) != std::string::npos);
    md_head += " " + std::string(h) + " |";
    html_head += "<th>" + std::string(h) + "</th>";
  }
  CHECK(md.find(md_head + "\n") != std::string::npos);
  CHECK(html.find(html_head) != std::string::npos);
  // One headroom format and one missing mark: 2× in all three; the missing pinned rate a dash.
  CHECK(terminal.find("2×") != std::string::npos);
  CHECK(md.find("| 2× |") != std::string::npos);
  CHECK(html.find("<td>2×</td>") != std::string::npos);
  CHECK(terminal.find(" - ") == std::string::npos);
  CHECK(terminal.find("–") != std::string::npos);
}

TEST_CASE("reports: one number format and one missing mark", "[reports]") {
  CHECK(format_number(0.123456) == "0.1235");
  CHECK(format_number(1.5e-5) == "1.5e-05");
  CHECK(format_number(std::nan("")) == "–");
  CHECK(format_factor(6.167594857709478) == "6.17×");
  CHECK(format_factor(std::nan("")) == "–");
  CHECK(std::string(kMissingMark) == "–");
}
