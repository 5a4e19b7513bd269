// Why runs failed, as every report shows it (terminal, report.md, report.html, junit.xml): per
// case the distinct reasons (core/results.hpp, failure_reasons) with the first failed run's
// command line, request and stderr tail, so that a trainer that cannot even start is seen at
// once, not only inside results.json.
#pragma once
#include <string>
#include <vector>

#include "stepgate/core/results.hpp"

namespace stepgate {

/// Reasons shown per case; further ones are counted ("and 3 more reasons").
inline constexpr std::size_t kShownFailureReasons = 5;

/// The argv as one line a reader could type: words with anything but [A-Za-z0-9_./:=,+@%-]
/// in single quotes (a ' inside as '\''). For showing only: stepgate never gives it to a shell.
std::string command_line(const std::vector<std::string>& argv);

/// Plain text, unescaped (each writer escapes for its format): per reason
///   "N run(s) failed: REASON" / "first at rate R, seed S" / "command: ..." / "request: ..." /
///   "stderr (last lines):" and the tail, each line after the first prefixed by `indent` and
///   two spaces more for the stderr lines. "" when no run of the case failed.
std::string failures_text(const CaseResult& c, const std::string& indent = "");

/// For the terminal: "runs that failed:" and, per case with failed runs, its id and
/// failures_text indented. "" when no run failed.
std::string run_failures_text(const Results& results);

}  // namespace stepgate
