#include "stepgate/cli/gate_output.hpp"

#include <iostream>

namespace stepgate::cli {

void print_findings(const GateReport& gate, const Results& results) { std::cout << findings_text(gate, results); }

}  // namespace stepgate::cli
