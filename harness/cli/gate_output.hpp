// What check and run print: the findings and the verdict on the terminal. The report files are
// written by report/ (stage_reports, write_reports).
#pragma once

#include "stepgate/gate/findings.hpp"
#include "stepgate/report/reporter.hpp"

namespace stepgate::cli {

/// Prints the warn/fail findings and the verdict's count line to stdout (findings_text).
void print_findings(const GateReport& gate, const Results& results);

/// Prints why runs failed (run_failures_text) to stdout; nothing when no run failed.
void print_run_failures(const Results& results);

}  // namespace stepgate::cli
