#include "stepgate/report/failures.hpp"

#include <fmt/format.h>

#include "stepgate/report/format.hpp"

namespace stepgate {

namespace {

bool plain_word(const std::string& w) {
  if (w.empty()) return false;
  for (const char ch : w) {
    const bool ok = (ch >= 'a' && ch <= 'z') || (ch >= 'A' && ch <= 'Z') || (ch >= '0' && ch <= '9') ||
                    std::string_view("_./:=,+@%-").find(ch) != std::string_view::npos;
    if (!ok) return false;
  }
  return true;
}

// Each line of `text` after a newline gets `prefix`.
std::string indented(const std::string& text, const std::string& prefix) {
  std::string out = prefix;
  for (const char ch : text) {
    out += ch;
    if (ch == '\n') out += prefix;
  }
  return out;
}

}  // namespace

std::string command_line(const std::vector<std::string>& argv) {
  std::string out;
  for (const std::string& w : argv) {
    if (!out.empty()) out += ' ';
    if (plain_word(w)) {
      out += w;
      continue;
    }
    out += '\'';
    for (const char ch : w) out += ch == '\'' ? std::string("'\\''") : std::string(1, ch);
    out += '\'';
  }
  return out;
}

std::string failures_text(const CaseResult& c, const std::string& indent) {
  const std::vector<FailureReason> reasons = failure_reasons(c);
  std::string out;
  for (std::size_t i = 0; i < reasons.size() && i < kShownFailureReasons; ++i) {
    const FailureReason& f = reasons[i];
    out += fmt::format("{}{} run{} failed: {}\n", indent, f.runs, f.runs == 1 ? "" : "s",
                       f.reason.empty() ? "(no reason recorded)" : f.reason);
    out += fmt::format("{}  first at rate {}, seed {}\n", indent, format_number(f.rate), f.seed);
    if (!f.command.empty()) out += fmt::format("{}  command: {}\n", indent, command_line(f.command));
    if (!f.request.empty()) out += fmt::format("{}  request: {}\n", indent, f.request);
    if (!f.stderr_tail.empty())
      out += fmt::format("{}  stderr (last lines):\n{}\n", indent, indented(f.stderr_tail, indent + "    "));
    else if (!f.command.empty())
      out += fmt::format("{}  stderr: (empty)\n", indent);
  }
  if (reasons.size() > kShownFailureReasons) {
    const std::size_t more = reasons.size() - kShownFailureReasons;
    out += fmt::format("{}and {} more reason{} (results.json, \"failures\" of the case)\n", indent, more,
                       more == 1 ? "" : "s");
  }
  return out;
}

std::string run_failures_text(const Results& results) {
  std::string out;
  for (const CaseResult& c : results.cases) {
    const std::string text = failures_text(c, "    ");
    if (!text.empty()) out += fmt::format("  {}:\n{}", c.id, text);
  }
  return out.empty() ? out : "runs that failed:\n" + out;
}

}  // namespace stepgate
