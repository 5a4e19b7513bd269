#include "stepgate/report/summary_table.hpp"

#include <algorithm>
#include <cmath>
#include <vector>

#include <fmt/format.h>

#include "stepgate/report/format.hpp"

namespace stepgate {

namespace {

// Width in characters on the terminal, not in bytes: "–" and "×" are one column each.
std::size_t columns(const std::string& s) {
  std::size_t n = 0;
  for (unsigned char ch : s) n += (ch & 0xC0) != 0x80;
  return n;
}

}  // namespace

std::string summary_table(const Results& results, const GateReport& gate) {
  const std::vector<std::string> head(kSummaryHeadings.begin(), kSummaryHeadings.end());
  std::vector<std::vector<std::string>> rows;
  std::vector<std::string> errors;
  for (const CaseResult& c : results.cases) {
    const std::string worst = case_status(c, gate);
    if (!c.error.empty()) {
      errors.push_back(fmt::format("{}: not run: {}", c.id, c.error));
      continue;
    }
    const CaseSummary& s = c.summary;
    const std::string edge = edge_cell(s, c.verification);
    rows.push_back({c.id, format_number(s.floor), edge, format_number(s.best_rate), format_number(s.pinned),
                    format_factor(s.headroom), s.reference ? format_number(s.reference->min_lre) : std::string(kMissingMark),
                    worst});
  }
  std::vector<std::size_t> width(head.size());
  for (std::size_t j = 0; j < head.size(); ++j) {
    width[j] = columns(head[j]);
    for (const auto& r : rows) width[j] = std::max(width[j], columns(r[j]));
  }
  std::string out;
  auto line = [&](const std::vector<std::string>& cells) {
    for (std::size_t j = 0; j < cells.size(); ++j) {
      const std::string pad(width[j] - columns(cells[j]), ' ');
      out += j == 0 ? cells[j] + pad : "  " + pad + cells[j];
    }
    out += "\n";
  };
  line(head);
  for (const auto& r : rows) line(r);
  for (const auto& e : errors) out += e + "\n";
  if (const std::string v = verify_line(results); !v.empty()) out += v + "\n";
  return out;
}

}  // namespace stepgate
