#include "cli/gate_output.hpp"

#include <filesystem>
#include <iostream>

#include <fmt/format.h>

namespace stepgate::cli {

void print_findings(const GateReport& gate, const Results& results) {
  for (const Finding& f : gate.findings)
    if (f.severity != Severity::pass)
      std::cout << fmt::format("{:<5} {}  {}: {}\n", to_string(f.severity), f.case_id, to_string(f.rule), f.message);
  // Counts are of findings (one per case and rule); report.md counts cases.
  std::cout << fmt::format("verdict: {} ({} failing, {} warnings, {} cases{})\n", gate.pass ? "pass" : "fail",
                           gate.failures, gate.warnings, results.cases.size(),
                           gate.had_baseline ? "" : "; no baseline: only pinned, reference and theory rules");
}

std::vector<std::string> write_reports(const std::string& dir, const Results& results, const Baseline* baseline,
                                       const GateReport& gate) {
  const ReportInput in{results, baseline, gate};
  std::vector<std::string> written;
  for (const auto& reporter : all_reporters()) {
    const std::string path = (std::filesystem::path(dir) / reporter->file_name()).string();
    write_text_atomically(path, reporter->render(in));
    written.push_back(path);
  }
  return written;
}

}  // namespace stepgate::cli
