// junit.xml: one <testsuite> per results, one <testcase> per finding (classname = case id,
// name = rule), so that CI systems show each rule of each case as a test.
//
// Choices (JUnit has no "warning"):
// - a fail finding carries <failure message="..." type="<rule>">message</failure>;
// - a warn finding passes but carries <system-out>warning: message</system-out>, so the build
//   stays green while the warning is still visible beside the test;
// - a case that could not be run carries <error> instead of <failure> (counted in "errors");
// - a case with failed runs carries why (report/failures.hpp: each distinct reason with the
//   first failed run's command and stderr tail) in <system-err> of its first testcase and
//   after the message in the text of each of its <failure> and <error> elements, where CI
//   panels show it;
// - a case that got no finding at all (no baseline, no pinned rate, no reference, no theory)
//   gets one <testcase name="no_rule_applied"> with <skipped>, so that it does not vanish;
// - a testcase's "time" is its case's own elapsed time, given to the case's first testcase (its
//   other testcases get 0); the testsuite's "time" is the run's elapsed time. With --jobs 2
//   cases run side by side, so the cases' times may add up to more than the suite's.
// Nothing else varies between two renderings of the same input: no timestamp, no host name.
#include <algorithm>
#include <cmath>
#include <set>
#include <sstream>
#include <string>
#include <vector>

#include <fmt/format.h>
#include <pugixml.hpp>

#include "stepgate/core/quote_text.hpp"
#include "stepgate/report/failures.hpp"
#include "stepgate/report/format.hpp"
#include "stepgate/report/reporter.hpp"

namespace stepgate {

namespace {

// XML 1.0 cannot carry control characters other than tab, newline and carriage return, not
// even as character references; pugixml escapes markup but passes these through.
std::string xml_safe(const std::string& s) {
  std::string out;
  out.reserve(s.size());
  for (const char ch : s) append_visible(out, ch, "\t\n\r");  // others as visible \xNN
  return out;
}

void attr(pugi::xml_node node, const char* name, const std::string& value) {
  node.append_attribute(name).set_value(xml_safe(value).c_str());
}
std::string seconds(double s) { return fmt::format("{:.3f}", s); }

struct Counts {
  int tests = 0, failures = 0, errors = 0, skipped = 0;
  double time = 0.0;
};

void set_counts(pugi::xml_node node, const Counts& n) {
  attr(node, "tests", std::to_string(n.tests));
  attr(node, "failures", std::to_string(n.failures));
  attr(node, "errors", std::to_string(n.errors));
  attr(node, "skipped", std::to_string(n.skipped));
  attr(node, "time", seconds(n.time));
}

double known(double seconds) { return std::isfinite(seconds) ? seconds : 0.0; }

pugi::xml_node add_testcase(pugi::xml_node suite, const std::string& case_id, const std::string& name, double time) {
  pugi::xml_node tc = suite.append_child("testcase");
  attr(tc, "classname", case_id);
  attr(tc, "name", name);
  attr(tc, "time", seconds(time));
  return tc;
}

// `failures`: failures_text of the case ("" when no run failed).
void add_finding(pugi::xml_node tc, const Finding& f, bool not_run, const std::string& failures, Counts& n) {
  const std::string rule(to_string(f.rule));
  if (f.severity == Severity::fail) {
    pugi::xml_node child = tc.append_child(not_run ? "error" : "failure");
    attr(child, "message", f.message);
    attr(child, "type", rule);
    child.text().set(xml_safe(failures.empty() ? f.message : f.message + "\n\nRuns that failed:\n" + failures).c_str());
    ++(not_run ? n.errors : n.failures);
  } else if (f.severity == Severity::warn) {
    tc.append_child("system-out").text().set(xml_safe("warning: " + f.message).c_str());
  }
}

Counts add_suite(pugi::xml_node root, const ReportInput& in) {
  const Results& r = in.results;
  pugi::xml_node suite = root.append_child("testsuite");
  attr(suite, "name", r.suite.name);
  pugi::xml_node props = suite.append_child("properties");
  auto property = [&](const char* name, const std::string& value) {
    pugi::xml_node p = props.append_child("property");
    attr(p, "name", name);
    attr(p, "value", value);
  };
  property("suite_sha256", r.suite.sha256);
  property("tool_version", r.tool.version);
  property("verdict", in.gate.pass ? "pass" : "fail");
  property("baseline_accepted", in.baseline ? in.baseline->accepted : "none");
  if (const std::string v = verify_line(r); !v.empty()) property("verify_mode", v);

  Counts n;
  auto emit = [&](const std::string& id, const CaseResult* c) {
    const bool not_run = c && !c->error.empty();
    const std::string failures = c ? failures_text(*c) : "";
    double time = c ? known(c->wall_seconds) : 0.0;
    pugi::xml_node first;
    for (const Finding& f : in.gate.findings) {
      if (f.case_id != id) continue;
      pugi::xml_node tc = add_testcase(suite, id, std::string(to_string(f.rule)), time);
      if (!first) first = tc;
      time = 0.0;
      ++n.tests;
      add_finding(tc, f, not_run && f.rule == Rule::case_presence, failures, n);
    }
    if (!first) {
      first = add_testcase(suite, id, "no_rule_applied", time);
      attr(first.append_child("skipped"), "message", "no gate rule applied to this case");
      ++n.tests;
      ++n.skipped;
    }
    if (c && c->verification) {  // what the probes proved, or why the case was searched after all
      pugi::xml_node out = first.child("system-out");
      const std::string before = out ? std::string(out.text().get()) + "\n" : "";
      if (!out) out = first.append_child("system-out");
      out.text().set(xml_safe(before + describe(*c->verification)).c_str());
    }
    if (!failures.empty()) first.append_child("system-err").text().set(xml_safe("Runs that failed:\n" + failures).c_str());
  };
  // The order of the findings: ids that are not cases of these results and come before them
  // (the suite itself), then the cases in order, then ids after them (only in the baseline).
  std::set<std::string> cases;
  for (const CaseResult& c : r.cases) cases.insert(c.id);
  std::vector<std::string> others_before, others_after;
  bool after = false;
  for (const Finding& f : in.gate.findings) {
    if (cases.count(f.case_id)) {
      after = true;
      continue;
    }
    auto& list = after ? others_after : others_before;
    if (std::find(list.begin(), list.end(), f.case_id) == list.end()) list.push_back(f.case_id);
  }
  for (const std::string& id : others_before) emit(id, nullptr);
  for (const CaseResult& c : r.cases) emit(c.id, &c);
  for (const std::string& id : others_after) emit(id, nullptr);
  n.time = known(r.wall_seconds);
  set_counts(suite, n);
  return n;
}

class JunitReporter final : public Reporter {
 public:
  std::string format() const override { return "junit"; }
  std::string file_name() const override { return "junit.xml"; }
  std::string render(const ReportInput& in) const override {
    pugi::xml_document doc;
    pugi::xml_node root = doc.append_child("testsuites");
    attr(root, "name", "stepgate");
    const Counts n = add_suite(root, in);
    set_counts(root, n);
    std::ostringstream out;
    doc.save(out, "  ", pugi::format_default, pugi::encoding_utf8);
    return out.str();
  }
};

}  // namespace

std::unique_ptr<Reporter> make_junit_reporter() { return std::make_unique<JunitReporter>(); }

}  // namespace stepgate
