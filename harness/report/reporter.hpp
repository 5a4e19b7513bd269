// Reports: one interface, one writer per format (Markdown, HTML with inline SVG, JUnit XML).
// Every reporter renders the same input; none reaches into sweep/ or run/.
#pragma once
#include <memory>
#include <string>
#include <vector>

#include "stepgate/core/output_files.hpp"
#include "stepgate/core/results.hpp"
#include "stepgate/gate/baseline.hpp"
#include "stepgate/gate/findings.hpp"

namespace stepgate {

struct ReportInput {
  const Results& results;
  const Baseline* baseline = nullptr;  ///< null when rendered without a baseline
  const GateReport& gate;              ///< apply_gate(results, baseline)
};

class Reporter {
 public:
  virtual ~Reporter() = default;
  /// "markdown", "html", "junit"
  virtual std::string format() const = 0;
  /// "report.md", "report.html", "junit.xml"
  virtual std::string file_name() const = 0;
  virtual std::string render(const ReportInput& in) const = 0;
};

std::unique_ptr<Reporter> make_markdown_reporter();
std::unique_ptr<Reporter> make_html_reporter();
std::unique_ptr<Reporter> make_junit_reporter();
/// All of them, in the order above.
std::vector<std::unique_ptr<Reporter>> all_reporters();

/// The plain warning every report carries: rates are verified only on the data named.
std::string scope_warning(const Results& results);

using Reporters = std::vector<std::unique_ptr<Reporter>>;

/// Renders each reporter and stages its file in `dir` (report.md, report.html, junit.xml for
/// all_reporters()) in `set`, to be committed with the other outputs; returns the paths staged.
std::vector<std::string> stage_reports(OutputSet& set, const std::string& dir, const ReportInput& in,
                                       const Reporters& reporters);
/// The same, committed on their own as one unit; returns the paths written. ToolError when a
/// file cannot be written (then none of them changed).
std::vector<std::string> write_reports(const std::string& dir, const ReportInput& in, const Reporters& reporters);

/// The warn and fail findings, one line each ("fail  CASE  RULE: message"), then the verdict
/// line with the counts of findings: what `stepgate check` and `run --baseline` print.
std::string findings_text(const GateReport& gate, const Results& results);

}  // namespace stepgate
