// What check, run --baseline and report print and write: the findings on the terminal and
// the three report files.
#pragma once
#include <string>

#include "stepgate/gate/findings.hpp"
#include "stepgate/report/reporter.hpp"

namespace stepgate::cli {

/// Prints the warn/fail findings and the verdict line to stdout.
void print_findings(const GateReport& gate, const Results& results);
/// Writes report.md, report.html and junit.xml into `dir`; returns the paths written.
std::vector<std::string> write_reports(const std::string& dir, const Results& results, const Baseline* baseline,
                                       const GateReport& gate);

}  // namespace stepgate::cli
