#include "stepgate/report/format.hpp"

#include <cmath>
#include <set>

#include <fmt/format.h>

namespace stepgate {

std::string format_number(double v) { return std::isnan(v) ? std::string(kMissingMark) : fmt::format("{:.4g}", v); }

std::string format_factor(double v) { return std::isnan(v) ? std::string(kMissingMark) : fmt::format("{:.3g}×", v); }

std::string count_line(const GateReport& gate, const Results& results) {
  std::set<std::string> cases;
  for (const CaseResult& c : results.cases) cases.insert(c.id);
  std::set<std::string> others;  // ids with findings that are not cases of these results
  for (const Finding& f : gate.findings)
    if (!cases.count(f.case_id)) others.insert(f.case_id);
  int failing = 0, warning = 0, passing = 0, missing = 0;
  std::string suite_level;
  const auto count = [&](const std::string& id) {
    const std::optional<Severity> w = gate.worst(id);
    failing += w == Severity::fail;
    warning += w == Severity::warn;
    passing += !w || *w == Severity::pass;
  };
  for (const CaseResult& c : results.cases) count(c.id);
  for (const std::string& id : others) {
    bool is_case = false;  // a case of the baseline missing here has a case_presence finding
    for (const Finding* f : gate.of_case(id)) is_case = is_case || f->rule == Rule::case_presence;
    if (is_case) {
      ++missing;
      count(id);
    } else if (const auto w = gate.worst(id); w && *w != Severity::pass) {
      suite_level += id == kSuiteFindingId ? fmt::format("; the suite file changed ({})", to_string(*w))
                                           : fmt::format("; {}: {}", id, to_string(*w));
    }
  }
  const int total = static_cast<int>(results.cases.size()) + missing;
  return fmt::format("verdict: {} — {} case{}: {} failing, {} with warnings, {} passing{}{}", gate.pass ? "pass" : "fail",
                     total, total == 1 ? "" : "s", failing, warning, passing,
                     missing ? fmt::format(" ({} missing from the results)", missing) : "", suite_level);
}

std::string verify_line(const Results& results) {
  int checked = 0, verified = 0, runs = 0;
  for (const CaseResult& c : results.cases) {
    if (!c.verification) continue;
    ++checked;
    runs += c.verification->runs;
    verified += c.verification->verified;
  }
  if (checked == 0) return "";
  const int searched = checked - verified;
  return fmt::format("verify mode: {} of {} case{} verified against the baseline with {} probe run{}{}; a verified "
                     "case's best rate, blow-up and ragged zone are not measured (run with --full to search every "
                     "case)",
                     verified, results.cases.size(), results.cases.size() == 1 ? "" : "s", runs, runs == 1 ? "" : "s",
                     searched ? fmt::format(", {} searched after a probe disagreed", searched) : "");
}

std::string edge_cell(const CaseSummary& s, const std::optional<BaselineCheck>& check) {
  if (check && check->verified && !std::isnan(check->edge_outside))
    return fmt::format("[{}, {})", format_number(check->edge_inside), format_number(check->edge_outside));
  if (std::isnan(s.edge) || std::isnan(s.ragged_top)) return format_number(s.edge);
  return fmt::format("{} (ragged to {})", format_number(s.edge), format_number(s.ragged_top));
}

std::string case_status(const CaseResult& c, const GateReport& gate) {
  const std::optional<Severity> w = gate.worst(c.id);
  std::string out = w ? std::string(to_string(*w)) : "none";
  if (c.verification) out += c.verification->verified ? " (verified)" : " (searched)";
  return out;
}

std::string baseline_free_note() {
  std::string rules;
  const auto& list = baseline_free_rules();
  for (std::size_t i = 0; i < list.size(); ++i)
    rules += (i == 0 ? "" : i + 1 == list.size() ? " and " : ", ") + std::string(to_string(list[i]));
  return "no baseline: only the rules that need none were applied (" + rules +
         ", and a case that could not be run fails)";
}

}  // namespace stepgate
