// Reports: one interface, one writer per format (Markdown, HTML with inline SVG, JUnit XML).
// Every reporter renders the same input; none reaches into sweep/ or run/.
#pragma once
#include <memory>
#include <string>
#include <vector>

#include "core/results.hpp"
#include "gate/baseline.hpp"
#include "gate/findings.hpp"

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

}  // namespace stepgate
