#include "stepgate/report/record.hpp"

#include <cmath>

#include <fmt/format.h>

#include "stepgate/report/format.hpp"
#include "stepgate/report/reporter.hpp"
#include "stepgate/report/text_safety.hpp"

namespace stepgate {

namespace {

const std::string kNone(kMissingMark);
constexpr const char* kHistory = "## History";

std::string number(double v) { return format_number(v); }

// Suite strings on one line (a newline could forge a heading such as "## History") and inert
// (report/text_safety.hpp: no raw HTML, no link or emphasis, no raw control byte, pipes escaped
// for table cells).
std::string one_line(const std::string& s) { return markdown_text(s); }
std::string cell(const std::string& s) { return markdown_text(s); }
std::string or_none(const std::string& s) { return s.empty() ? kNone : s; }

std::string edge_cell(const BaselineCase& b) {
  if (std::isnan(b.edge)) return kNone;
  std::string cell = fmt::format("{} [{}, {}]", number(b.edge), number(b.edge_lo), number(b.edge_hi));
  if (!std::isnan(b.ragged_top)) cell += fmt::format(" (ragged to {})", number(b.ragged_top));
  return cell;
}

// The name from the results, the hash from the baseline: the data that was accepted.
std::string data_cell(const CaseResult& c, const BaselineCase& b) {
  if (c.dataset.empty()) return "no data";
  if (b.data_sha256.empty()) return fmt::format("{}, sha256 none (generated)", cell(c.dataset));
  return fmt::format("{}, sha256 `{}`", cell(c.dataset), cell(b.data_sha256));
}

std::string reference_cell(const CaseResult& c, const BaselineCase& b) {
  if (std::isnan(b.min_lre) && !c.summary.reference) return kNone;
  const std::string source = c.summary.reference ? cell(c.summary.reference->source) : "";
  return source.empty() ? number(b.min_lre) : fmt::format("{} ({})", number(b.min_lre), source);
}

}  // namespace

std::string render_record_entry(const Results& results, const Baseline& baseline) {
  const SuiteInfo& suite = baseline.suite.name.empty() ? results.suite : baseline.suite;
  const ToolInfo& tool = baseline.tool.version.empty() ? results.tool : baseline.tool;
  const HostInfo& host = baseline.host.os.empty() ? results.host : baseline.host;
  std::string out = fmt::format("### {} — suite {}\n\n", or_none(one_line(baseline.accepted)), one_line(suite.name));
  out += fmt::format("- Accepted: {} (results started {})\n", or_none(one_line(baseline.accepted)),
                     or_none(one_line(results.started)));
  out += fmt::format("- Suite: {} ({}), sha256 `{}`\n", one_line(suite.name), or_none(one_line(suite.path)),
                     or_none(one_line(suite.sha256)));
  out += fmt::format("- Tool: stepgate {}, {}, {}\n", or_none(one_line(tool.version)), or_none(one_line(tool.compiler)),
                     or_none(one_line(tool.build)));
  out += fmt::format("- Host: {}, {}, {} cores\n", or_none(one_line(host.os)), or_none(one_line(host.machine)),
                     host.cores);
  if (!results.shard.empty()) out += fmt::format("- Shard: {} (not the whole suite)\n", one_line(results.shard));

  out += "\n| case | data | floor | edge [bracket] | best rate | pinned | headroom | blow-up | min LRE |\n"
         "|---|---|---|---|---|---|---|---|---|\n";
  std::string not_verified;
  for (const CaseResult& c : results.cases) {
    const BaselineCase* b = baseline.find(c.id);
    if (!b) {
      not_verified += fmt::format("- {}: not verified{}\n", one_line(c.id),
                                  c.error.empty() ? " (not in the baseline)" : ": could not be run: " + one_line(c.error));
      continue;
    }
    out += fmt::format("| {} | {} | {} | {} | {} | {} | {} | {} | {} |\n", cell(c.id), data_cell(c, *b), number(b->floor),
                       edge_cell(*b), number(b->best_rate), number(b->pinned),
                       format_factor(b->headroom), number(b->blowup),
                       reference_cell(c, *b));
  }
  if (!not_verified.empty()) out += "\n" + not_verified;
  out += "\n**Scope.** " + one_line(scope_warning(results)) + "\n";
  return out;
}

std::string append_record(const std::string& existing, const std::string& suite_name, const std::string& entry) {
  std::string body = entry;
  if (body.empty() || body.back() != '\n') body += '\n';
  if (existing.find_first_not_of(" \t\r\n") == std::string::npos)
    return fmt::format(
        "# Verification record: {}\n\n"
        "Each entry below was written by `stepgate accept` when a baseline of this suite was accepted. It "
        "names the rates that were verified for each case (floor, edge with its bracket, best, pinned, "
        "headroom, blow-up, reference digits), the data they were verified on (SHA-256), and the suite, tool "
        "and host. The newest entry comes first; older entries are kept as they were written.\n\n"
        "{}\n\n{}",
        one_line(suite_name), kHistory, body);
  // The heading as a whole line: at the start or after a newline, and ending the line.
  for (std::size_t at = existing.find(kHistory); at != std::string::npos; at = existing.find(kHistory, at + 1)) {
    const std::size_t end = at + std::string_view(kHistory).size();
    const bool line_start = at == 0 || existing[at - 1] == '\n';
    const bool line_end = end == existing.size() || existing[end] == '\n' || existing[end] == '\r';
    if (!line_start || !line_end) continue;
    std::size_t after = existing.find('\n', end);
    if (after == std::string::npos) return existing + "\n\n" + body;
    ++after;  // past the heading's newline
    std::string rest = existing.substr(after);
    std::size_t blank = 0;  // the blank line between the heading and the newest entry
    while (blank < rest.size() && (rest[blank] == '\n' || rest[blank] == '\r')) ++blank;
    const std::string older = rest.substr(blank);
    return existing.substr(0, after) + "\n" + body + (older.empty() ? "" : "\n" + older);
  }
  std::string out = existing;
  if (out.back() != '\n') out += '\n';
  return out + "\n" + kHistory + "\n\n" + body;
}

}  // namespace stepgate
