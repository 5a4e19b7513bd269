#include "stepgate/cli/gate_output.hpp"

#include <iostream>

namespace stepgate::cli {

void print_findings(const GateReport& gate, const Results& results) { std::cout << findings_text(gate, results); }

std::vector<std::string> write_reports(const std::string& dir, const Results& results, const Baseline* baseline,
                                       const GateReport& gate) {
  return stepgate::write_reports(dir, ReportInput{results, baseline, gate});
}

}  // namespace stepgate::cli
