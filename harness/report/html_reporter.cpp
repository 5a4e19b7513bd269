// report.html: one self-contained page (no script, no external resource) with the verdict,
// the scope note, a summary table, the findings, and per case the range bar, the cost plot
// and the outcome map as inline SVG. Every string from a suite or results is escaped.
#include <algorithm>
#include <cmath>
#include <string>
#include <vector>

#include <fmt/format.h>

#include "stepgate/report/failures.hpp"
#include "stepgate/report/format.hpp"
#include "stepgate/report/html_case_plots.hpp"
#include "stepgate/report/html_escape.hpp"
#include "stepgate/report/html_style.hpp"
#include "stepgate/report/reporter.hpp"

namespace stepgate {

std::string html_number(double v) { return format_number(v); }

namespace {

std::string esc(std::string_view s) { return html_escape(s); }

std::string badge(Severity s) {
  const std::string_view name = to_string(s);
  return fmt::format("<span class=\"badge {}\">{}</span>", name, name);
}

// The worst severity among a case's findings; none when the case has no finding.
const Severity* worst(const std::vector<const Finding*>& fs) {
  const Severity* w = nullptr;
  for (const Finding* f : fs)
    if (!w || static_cast<int>(f->severity) > static_cast<int>(*w)) w = &f->severity;
  return w;
}

std::string finding_item(const Finding& f, bool with_case) {
  std::string out = "<li>" + badge(f.severity);
  if (with_case) out += "<span class=\"case\">" + esc(f.case_id) + "</span>";
  out += fmt::format("<span class=\"rule\">{}</span><span>{}</span></li>\n", to_string(f.rule), esc(f.message));
  return out;
}

// Fails first, then warnings; passes folded away.
std::string findings_list(const std::vector<const Finding*>& fs, bool with_case) {
  std::string out;
  std::vector<const Finding*> passed;
  std::string shown;
  for (Severity s : {Severity::fail, Severity::warn})
    for (const Finding* f : fs)
      if (f->severity == s) shown += finding_item(*f, with_case);
  for (const Finding* f : fs)
    if (f->severity == Severity::pass) passed.push_back(f);
  const std::string list = with_case ? "<ul class=\"findings with-case\">\n" : "<ul class=\"findings\">\n";
  if (!shown.empty()) out += list + shown + "</ul>\n";
  if (!passed.empty()) {
    out += fmt::format("<details><summary>{} passing check{}</summary>\n", passed.size(),
                       passed.size() == 1 ? "" : "s");
    out += list;
    for (const Finding* f : passed) out += finding_item(*f, with_case);
    out += "</ul>\n</details>\n";
  }
  if (fs.empty()) out += "<p class=\"note\">No finding.</p>\n";
  return out;
}

std::string header(const ReportInput& in) {
  const Results& r = in.results;
  std::string out = fmt::format("<header>\n<h1>stepgate report: {} <span class=\"badge {}\">verdict: {}</span>{}</h1>\n",
                                esc(r.suite.name), in.gate.pass ? "pass" : "fail", in.gate.pass ? "pass" : "fail",
                                in.baseline ? "" : " <span class=\"badge none\">no baseline</span>");
  out += "<p class=\"meta\">";
  out += fmt::format("<span>suite <code>{}</code></span>", esc(r.suite.path));
  out += fmt::format("<span>sha256 <code>{}</code></span>", esc(r.suite.sha256.substr(0, 12)));
  out += "<span class=\"counts\">" + esc(count_line(in.gate, r)) + "</span>";
  if (!r.shard.empty()) out += fmt::format("<span>shard {}</span>", esc(r.shard));
  if (!r.started.empty()) out += fmt::format("<span>run {} to {}</span>", esc(r.started), esc(r.finished));
  out += fmt::format("<span>stepgate {} ({}, {})</span>", esc(r.tool.version), esc(r.tool.compiler), esc(r.tool.build));
  if (!r.host.os.empty())
    out += fmt::format("<span>{} {}, {} cores</span>", esc(r.host.os), esc(r.host.machine), r.host.cores);
  if (in.baseline)
    out += fmt::format("<span>baseline accepted {}</span>", esc(in.baseline->accepted));
  else
    out += "<span>" + esc(baseline_free_note()) + "</span>";
  out += "</p>\n";
  if (const std::string v = verify_line(r); !v.empty()) out += "<p class=\"meta\">" + esc(v) + "</p>\n";
  out += "<p class=\"scope\">" + esc(scope_warning(r)) + "</p>\n</header>\n";
  return out;
}

std::string summary_section(const ReportInput& in) {
  std::string out = "<section class=\"card\">\n<h2>Summary</h2>\n<table>\n<thead><tr>";
  for (std::string_view h : kSummaryHeadings) out += fmt::format("<th>{}</th>", h);
  out += "</tr></thead>\n<tbody>\n";
  for (std::size_t i = 0; i < in.results.cases.size(); ++i) {
    const CaseResult& c = in.results.cases[i];
    const CaseSummary& s = c.summary;
    const BaselineCase* b = in.baseline ? in.baseline->find(c.id) : nullptr;
    auto with_was = [&](double now, double was) {
      std::string cell = html_number(now);
      if (b && !(now == was) && !(std::isnan(now) && std::isnan(was)))
        cell += "<span class=\"was\">was " + html_number(was) + "</span>";
      return cell;
    };
    const bool verified = c.verification && c.verification->verified && !std::isnan(c.verification->edge_outside);
    std::string edge_cell = verified ? esc(stepgate::edge_cell(s, c.verification)) + "<span class=\"was\">baseline " +
                                           html_number(b ? b->edge : kMissing) + "</span>"
                                     : with_was(s.edge, b ? b->edge : kMissing);
    if (!std::isnan(s.ragged_top)) edge_cell += "<span class=\"was\">ragged to " + html_number(s.ragged_top) + "</span>";
    const Severity* w = worst(in.gate.of_case(c.id));
    // A case id breaks after its slashes (problem/, scaling/) before it breaks inside a name.
    std::string id = esc(c.id);
    for (std::size_t at = id.find('/'); at != std::string::npos; at = id.find('/', at + 6)) id.insert(at + 1, "<wbr>");
    out += fmt::format("<tr><td><a href=\"#case-{}\">{}</a></td>", i + 1, id);
    if (!c.error.empty()) {
      out += "<td colspan=\"6\" class=\"error\">not run</td>";
    } else {
      out += fmt::format("<td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td>",
                         with_was(s.floor, b ? b->floor : kMissing), edge_cell,
                         html_number(s.best_rate), html_number(s.pinned),
                         format_factor(s.headroom),
                         s.reference ? html_number(s.reference->min_lre) : std::string(kMissingMark));
    }
    const std::string checked = !c.verification ? "" : c.verification->verified ? " verified" : " searched";
    out += fmt::format("<td class=\"sev\">{}{}</td></tr>\n", w ? badge(*w) : "none", checked);
  }
  out += "</tbody>\n</table>\n</section>\n";
  return out;
}

std::string findings_section(const ReportInput& in) {
  std::vector<const Finding*> all;
  for (const Finding& f : in.gate.findings) all.push_back(&f);
  return "<section class=\"card\">\n<h2>Findings</h2>\n" + findings_list(all, true) + "</section>\n";
}

std::string fact(std::string_view name, const std::string& value_html) {
  return fmt::format("<dt>{}</dt><dd>{}</dd>", name, value_html);
}

std::string case_section(const ReportInput& in, std::size_t index) {
  const CaseResult& c = in.results.cases[index];
  const CaseSummary& s = c.summary;
  const BaselineCase* b = in.baseline ? in.baseline->find(c.id) : nullptr;
  const std::vector<const Finding*> fs = in.gate.of_case(c.id);
  const Severity* w = worst(fs);
  std::string out = fmt::format("<section class=\"card case\" id=\"case-{}\">\n<h2>{} {}</h2>\n", index + 1, esc(c.id),
                                w ? badge(*w) : "");
  out += "<dl class=\"facts\">";
  out += fact("problem", esc(c.problem) + " (" + esc(c.problem_kind) + ")");
  out += fact("optimizer", esc(c.optimizer.name()) + " (" + std::string(to_string(c.optimizer.kind)) + ")");
  out += fact("scaling", esc(c.scaling));
  out += fact("data", c.dataset.empty() ? "none"
                                        : esc(c.dataset) + (c.data_sha256.empty() ? "" : " <code>" + esc(c.data_sha256.substr(0, 12)) + "</code>"));
  out += fact("edge bracket", fmt::format("[{}, {}]", html_number(s.edge_lo), html_number(s.edge_hi)));
  const bool verified = c.verification && c.verification->verified;
  if (c.verification) out += fact("baseline check", esc(describe(*c.verification)));
  out += fact("ragged zone", verified ? "not measured (verified against the baseline, not searched)"
                             : std::isnan(s.ragged_top)
                                 ? "none (no rate above the edge converged)"
                                 : fmt::format("[{}, {}]: rates above the edge that still converged",
                                               html_number(s.edge), html_number(s.ragged_top)));
  out += fact("seed spread of edge", std::isnan(s.edge_spread)
                                         ? html_number(s.edge_spread)
                                         : html_number(s.edge_spread) + " (the largest seed's edge over the smallest's; 1: all "
                                                                        "seeds agree; no allowance in the gate: the seeds are the "
                                                                        "same in every run)");
  out += fact("best iterations", html_number(s.best_iterations));
  out += fact("pinned iterations", html_number(s.pinned_iterations) +
                                       (s.pinned_outcome ? " (" + std::string(to_string(*s.pinned_outcome)) + ")" : ""));
  out += fact("L, μ", html_number(c.theory.L) + ", " + html_number(c.theory.mu) +
                          (c.theory.method.empty() ? "" : " (" + esc(c.theory.method) + ")"));
  out += fact("runs, seeds", fmt::format("{}, {}", s.runs, s.seeds.size()));
  long log_lines = 0;
  for (const StoredRun& run : c.runs) log_lines += run.record.log_lines;
  if (c.problem_kind == "command")
    out += fact("log lines", fmt::format("{} (output lines of the program that were not protocol lines)", log_lines));
  if (s.reference)
    out += fact("min LRE", html_number(s.reference->min_lre) + " (about that many correct significant digits) against " +
                               esc(s.reference->source));
  out += "</dl>\n";
  if (!c.error.empty()) out += "<p class=\"error\">Could not be run: " + esc(c.error) + "</p>\n";
  out += "<h3>Findings</h3>\n" + findings_list(fs, false);
  if (const std::string failures = failures_text(c); !failures.empty())
    out += "<h3>Runs that failed</h3>\n<pre class=\"failures\">" + esc(failures) + "</pre>\n";
  out += "<h3>Safe range</h3>\n" + range_bar_html(c, b);
  out += cost_plot_html(c);  // with its own heading: it says what the y axis shows
  out += "<h3>Outcome of every run</h3>\n" + outcome_map_html(c);
  out += "</section>\n";
  return out;
}

class HtmlReporter final : public Reporter {
 public:
  std::string format() const override { return "html"; }
  std::string file_name() const override { return "report.html"; }
  std::string render(const ReportInput& in) const override {
    std::string out = "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n";
    // Nothing may load or run, even if a string slipped through unescaped.
    out += "<meta http-equiv=\"Content-Security-Policy\" content=\"default-src 'none'; style-src 'unsafe-inline'\">\n";
    out += "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n";
    out += "<title>stepgate: " + esc(in.results.suite.name) + " (" + (in.gate.pass ? "pass" : "fail") + ")</title>\n";
    out += "<style>";
    out += html_report_css();
    out += "</style>\n</head>\n<body>\n<main>\n";
    out += header(in);
    out += "<section class=\"card\">\n<h2>All cases on one axis</h2>\n" +
           suite_chart_html(in.results, in.baseline, in.gate) + "</section>\n";
    out += summary_section(in);
    out += findings_section(in);
    for (std::size_t i = 0; i < in.results.cases.size(); ++i) out += case_section(in, i);
    out += "<footer class=\"note\">Written by stepgate " + esc(in.results.tool.version) +
           ". A static page: no script, no external resource.</footer>\n";
    out += "</main>\n</body>\n</html>\n";
    return out;
  }
};

}  // namespace

std::unique_ptr<Reporter> make_html_reporter() { return std::make_unique<HtmlReporter>(); }

}  // namespace stepgate
