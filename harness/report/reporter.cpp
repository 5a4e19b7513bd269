// What every reporter shares: the list of reporters and the scope warning.
#include "stepgate/report/reporter.hpp"

#include <filesystem>
#include <set>
#include <utility>

#include <fmt/format.h>

#include "stepgate/report/format.hpp"

namespace stepgate {

std::vector<std::string> stage_reports(OutputSet& set, const std::string& dir, const ReportInput& in,
                                       const Reporters& reporters) {
  std::vector<std::string> staged;
  for (const auto& reporter : reporters) {
    const std::string path = (std::filesystem::path(dir) / reporter->file_name()).string();
    set.stage(path, reporter->render(in));
    staged.push_back(path);
  }
  return staged;
}

std::vector<std::string> write_reports(const std::string& dir, const ReportInput& in, const Reporters& reporters) {
  OutputSet set(dir);
  stage_reports(set, dir, in, reporters);
  return set.commit();
}

std::string findings_text(const GateReport& gate, const Results& results) {
  std::string out;
  for (const Finding& f : gate.findings)
    if (f.severity != Severity::pass)
      out += fmt::format("{:<5} {}  {}: {}\n", to_string(f.severity), f.case_id, to_string(f.rule), f.message);
  // The count line of every report (report/format.hpp): cases by their worst finding.
  out += count_line(gate, results) + "\n";
  if (!gate.had_baseline) out += baseline_free_note() + "\n";
  return out;
}

std::vector<std::unique_ptr<Reporter>> all_reporters() {
  std::vector<std::unique_ptr<Reporter>> out;
  out.push_back(make_markdown_reporter());
  out.push_back(make_html_reporter());
  out.push_back(make_junit_reporter());
  return out;
}

namespace {

// Suite strings go into one line of text: a newline must not break the warning apart.
std::string one_line(std::string s) {
  for (char& ch : s)
    if (ch == '\n' || ch == '\r') ch = ' ';
  return s;
}

std::string joined(const std::vector<std::string>& items) {
  std::string out;
  for (std::size_t i = 0; i < items.size(); ++i) {
    if (i > 0) out += i + 1 == items.size() ? " and " : ", ";
    out += items[i];
  }
  return out;
}

// Distinct values in first-seen order: the warning lists them as the suite does.
void add_once(std::vector<std::string>& list, std::set<std::string>& seen, std::string item) {
  if (seen.insert(item).second) list.push_back(std::move(item));
}

}  // namespace

std::string scope_warning(const Results& results) {
  std::vector<std::string> data, no_data, programs, scalings, optimizers;
  std::set<std::string> seen_data, seen_no_data, seen_programs, seen_scalings, seen_optimizers;
  for (const CaseResult& c : results.cases) {
    if (c.problem_kind == "command") {
      add_once(programs, seen_programs, one_line(c.problem.empty() ? c.id : c.problem));
    } else if (!c.dataset.empty()) {
      const std::string hash =
          c.data_sha256.empty() ? "generated, no file hash" : "sha256 " + c.data_sha256.substr(0, 12);
      add_once(data, seen_data, fmt::format("{} ({})", one_line(c.dataset), hash));
    } else {
      add_once(no_data, seen_no_data, one_line(c.problem.empty() ? c.id : c.problem));
    }
    add_once(scalings, seen_scalings, one_line(c.scaling));
    add_once(optimizers, seen_optimizers, one_line(c.optimizer.name()));
  }
  std::string where;
  if (!data.empty()) where = "the data sets " + joined(data);
  if (!no_data.empty())
    where += (where.empty() ? "" : " and ") + std::string("the problems without data ") + joined(no_data);
  if (!programs.empty())
    where += (where.empty() ? "" : " and ") +
             std::string("the training programs ") + joined(programs) +
             " as they ran here, on whatever data they read (stepgate hashes a program's data only when "
             "a data set's produce command writes it), and with their code as it was";
  if (where.empty()) where = "no data set (the suite has no cases)";
  return fmt::format(
      "These rates are verified only on {}, with the scalings {} and the optimizers {}; they are not "
      "verified for any other data (a different file, even with the same name, or the same data in other "
      "units), nor for other scalings or optimizers.",
      where, scalings.empty() ? "(none)" : joined(scalings), optimizers.empty() ? "(none)" : joined(optimizers));
}

}  // namespace stepgate
