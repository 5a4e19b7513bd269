// report.md: sized for a pull-request comment. The verdict comes first, then only the cases
// with warn or fail findings (baseline beside current, and the findings' messages), then one
// compact row per case, then the scope warning.
#include <algorithm>
#include <cmath>
#include <map>
#include <set>
#include <string>

#include <fmt/format.h>

#include "stepgate/core/quote_text.hpp"

#include "stepgate/report/failures.hpp"
#include "stepgate/report/format.hpp"
#include "stepgate/report/reporter.hpp"
#include "stepgate/report/text_safety.hpp"

namespace stepgate {

namespace {

const std::string kNone(kMissingMark);

std::string number(double v) { return format_number(v); }
std::string factor(double v) { return format_factor(v); }
// The edge, with the top of its ragged zone when some rate above it converged.
std::string edge_with_bracket(double edge, double lo, double hi) {
  if (std::isnan(edge)) return kNone;
  if (std::isnan(lo) && std::isnan(hi)) return number(edge);
  return fmt::format("{} [{}, {}]", number(edge), number(lo), number(hi));
}

// Suite strings and names as inert text on one line (report/text_safety.hpp): no table row
// cut short, no raw HTML, no link or emphasis from a name. In a table cell the pipe is escaped
// too (markdown_text escapes it everywhere).
std::string text(const std::string& s) { return markdown_text(s); }
std::string cell(const std::string& s) { return markdown_text(s); }
// Inside a code span (hashes): no references there, only one line.
std::string code(const std::string& s) {
  std::string out;
  for (char ch : s) {
    if (ch == '\n' || ch == '\r' || ch == '`') out += ' ';
    else append_visible(out, ch);
  }
  return "`" + out + "`";
}

// A fenced code block of many lines (a program's stderr): the fence is longer than any run of
// backticks inside, so no line can close it; control bytes but tab as visible \xNN. Inside a
// code block nothing is markup.
std::string code_block(const std::string& s) {
  std::string body;
  std::size_t run = 0, longest = 0;
  for (std::size_t i = 0; i < s.size(); ++i) {
    const char ch = s[i];
    run = ch == '`' ? run + 1 : 0;
    longest = std::max(longest, run);
    if (ch == '\r' && i + 1 < s.size() && s[i + 1] == '\n') continue;
    append_visible(body, ch, "\n\t");
  }
  const std::string fence(std::max<std::size_t>(3, longest + 1), '`');
  return fence + "text\n" + body + (body.empty() || body.back() != '\n' ? "\n" : "") + fence + "\n";
}

std::string worst_word(const GateReport& gate, const std::string& id) {
  const std::optional<Severity> w = gate.worst(id);
  return w ? std::string(to_string(*w)) : "none";
}

const CaseResult* find_case(const Results& r, const std::string& id) {
  for (const CaseResult& c : r.cases)
    if (c.id == id) return &c;
  return nullptr;
}

class MarkdownWriter {
 public:
  explicit MarkdownWriter(const ReportInput& in) : in_(in) {}

  std::string write() {
    verdict();
    details();
    failures();
    compact_table();
    verified();
    out_ += "\n**Scope.** " + text(scope_warning(in_.results)) + "\n";
    return std::move(out_);
  }

 private:
  // The count line every report shares (report/format.hpp), then the suite.
  void verdict() {
    const std::string& sha = in_.results.suite.sha256;
    out_ += fmt::format("**{}**; suite {} (sha256 {})\n", count_line(in_.gate, in_.results), text(in_.results.suite.name),
                        sha.empty() ? kNone : sha.substr(0, 12) + "…");
    if (!in_.baseline) out_ += "\n" + baseline_free_note() + ".\n";
    if (const std::string v = verify_line(in_.results); !v.empty()) out_ += "\n" + text(v) + ".\n";
  }

  void details() {
    std::vector<std::string> ids;  // in finding order: cases in results order
    std::set<std::string> seen;
    for (const Finding& f : in_.gate.findings)
      if (f.severity != Severity::pass && seen.insert(f.case_id).second) ids.push_back(f.case_id);
    if (ids.empty()) return;
    out_ += "\n### Cases with findings\n";
    for (const std::string& id : ids) case_detail(id);
  }

  // Why runs failed, per case: the reasons and the first failed run's command and stderr.
  void failures() {
    std::string section;
    for (const CaseResult& c : in_.results.cases) {
      const std::string why = failures_text(c);
      if (!why.empty()) section += fmt::format("\n#### {}\n\n{}", text(c.id), code_block(why));
    }
    if (!section.empty()) out_ += "\n### Runs that failed\n" + section;
  }

  void case_detail(const std::string& id) {
    const std::vector<const Finding*> findings = in_.gate.of_case(id);
    const CaseResult* c = find_case(in_.results, id);
    const BaselineCase* b = in_.baseline ? in_.baseline->find(id) : nullptr;
    out_ += fmt::format("\n#### {}: {}\n\n", worst_word(in_.gate, id), text(id));
    if (c || b) range_table(c, b);
    if (c && c->verification) out_ += fmt::format("- baseline check: {}\n", text(describe(*c->verification)));
    int passing = 0;
    for (const Finding* f : findings) {
      if (f->severity == Severity::pass) {
        ++passing;
        continue;
      }
      out_ += fmt::format("- **{}** `{}`: {}\n", to_string(f->severity), to_string(f->rule), text(f->message));
      if (f->rule == Rule::data_changed) both_hashes(c, b);
    }
    if (passing > 0) out_ += fmt::format("- {} other rule{} passed\n", passing, passing == 1 ? "" : "s");
  }

  // Both hashes in full, so that a reviewer can tell which file each run used.
  void both_hashes(const CaseResult* c, const BaselineCase* b) {
    const bool suite_level = !c && !b;
    std::string was = suite_level ? (in_.baseline ? in_.baseline->suite.sha256 : "") : (b ? b->data_sha256 : "");
    std::string now = suite_level ? in_.results.suite.sha256 : (c ? c->data_sha256 : "");
    const char* what = suite_level ? "suite" : "data";
    out_ += fmt::format("  - {} sha256 baseline: {}\n", what, was.empty() ? "none" : code(was));
    out_ += fmt::format("  - {} sha256 current:  {}\n", what, now.empty() ? "none" : code(now));
  }

  void range_table(const CaseResult* c, const BaselineCase* b) {
    const CaseSummary* s = c ? &c->summary : nullptr;
    auto row = [&](const char* what, const std::string& was, const std::string& now) {
      out_ += fmt::format("| {} | {} | {} |\n", what, was, now);
    };
    out_ += "| | baseline | current |\n|---|---|---|\n";
    row("floor", b ? number(b->floor) : kNone, s ? number(s->floor) : kNone);
    row("edge [bracket]", b ? edge_with_bracket(b->edge, b->edge_lo, b->edge_hi) : kNone,
        s ? edge_with_bracket(s->edge, s->edge_lo, s->edge_hi) : kNone);
    if ((b && !std::isnan(b->ragged_top)) || (s && !std::isnan(s->ragged_top)))
      row("ragged zone", b && !std::isnan(b->ragged_top) ? fmt::format("[{}, {}]", number(b->edge), number(b->ragged_top)) : kNone,
          s && !std::isnan(s->ragged_top) ? fmt::format("[{}, {}]", number(s->edge), number(s->ragged_top)) : kNone);
    row("best rate", b ? number(b->best_rate) : kNone, s ? number(s->best_rate) : kNone);
    row("pinned", b ? number(b->pinned) : kNone, s ? number(s->pinned) : kNone);
    row("headroom", b ? factor(b->headroom) : kNone, s ? factor(s->headroom) : kNone);
    out_ += "\n";
  }

  // What each verified case's probes prove (cases searched after a check are under findings).
  void verified() {
    std::string section;
    for (const CaseResult& c : in_.results.cases)
      if (c.verification && c.verification->verified)
        section += fmt::format("- {}: {}\n", text(c.id), text(describe(*c.verification)));
    if (!section.empty()) out_ += "\n### Verified against the baseline\n\n" + section;
  }

  void compact_table() {
    out_ += "\n### All cases\n\n|";
    for (std::string_view h : kSummaryHeadings) out_ += fmt::format(" {} |", h);
    out_ += "\n|---|---|---|---|---|---|---|---|\n";
    for (const CaseResult& c : in_.results.cases) {
      const CaseSummary& s = c.summary;
      std::string status = case_status(c, in_.gate);
      if (!c.error.empty()) status += ": not run: " + c.error;
      out_ += fmt::format("| {} | {} | {} | {} | {} | {} | {} | {} |\n", cell(c.id), number(s.floor), edge_cell(s, c.verification),
                          number(s.best_rate), number(s.pinned), factor(s.headroom),
                          s.reference ? number(s.reference->min_lre) : kNone, cell(status));
    }
    if (!in_.baseline) return;
    for (const BaselineCase& b : in_.baseline->cases)  // in the baseline, not in these results
      if (!find_case(in_.results, b.id))
        out_ += fmt::format("| {} | {} | {} | {} | {} | {} | {} | {} |\n", cell(b.id), kNone, kNone, kNone, kNone,
                            kNone, kNone, cell(worst_word(in_.gate, b.id) + ": missing"));
  }

  const ReportInput& in_;
  std::string out_;
};

class MarkdownReporter final : public Reporter {
 public:
  std::string format() const override { return "markdown"; }
  std::string file_name() const override { return "report.md"; }
  std::string render(const ReportInput& in) const override { return MarkdownWriter(in).write(); }
};

}  // namespace

std::unique_ptr<Reporter> make_markdown_reporter() { return std::make_unique<MarkdownReporter>(); }

}  // namespace stepgate
