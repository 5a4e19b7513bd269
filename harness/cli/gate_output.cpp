#include "stepgate/cli/gate_output.hpp"

#include <iostream>

#include "stepgate/report/failures.hpp"

namespace stepgate::cli {

void print_findings(const GateReport& gate, const Results& results) { std::cout << findings_text(gate, results); }

void print_run_failures(const Results& results) { std::cout << run_failures_text(results); }

}  // namespace stepgate::cli
