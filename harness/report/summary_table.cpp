#include "stepgate/report/summary_table.hpp"

#include <algorithm>
#include <cmath>
#include <vector>

#include <fmt/format.h>

namespace stepgate {

std::string format_number(double v) {
  if (std::isnan(v)) return "-";
  return fmt::format("{:.4g}", v);
}

std::string summary_table(const Results& results) {
  const std::vector<std::string> head = {"case", "floor", "edge", "best rate", "iters", "pinned", "headroom", "ref digits"};
  std::vector<std::vector<std::string>> rows;
  std::vector<std::string> errors;
  for (const CaseResult& c : results.cases) {
    if (!c.error.empty()) {
      errors.push_back(fmt::format("{}: not run: {}", c.id, c.error));
      continue;
    }
    const CaseSummary& s = c.summary;
    const std::string digits = s.reference ? format_number(s.reference->lre_min) : "";
    const std::string edge = std::isnan(s.ragged_top) ? format_number(s.edge)
                                                      : format_number(s.edge) + " (ragged to " + format_number(s.ragged_top) + ")";
    rows.push_back({c.id, format_number(s.floor), edge, format_number(s.best_rate),
                    format_number(s.best_iterations), format_number(s.pinned),
                    std::isnan(s.headroom) ? "-" : fmt::format("{:.2f}x", s.headroom), digits});
  }
  std::vector<std::size_t> width(head.size());
  for (std::size_t j = 0; j < head.size(); ++j) {
    width[j] = head[j].size();
    for (const auto& r : rows) width[j] = std::max(width[j], r[j].size());
  }
  std::string out;
  auto line = [&](const std::vector<std::string>& cells) {
    for (std::size_t j = 0; j < cells.size(); ++j)
      out += j == 0 ? fmt::format("{:<{}}", cells[j], width[j]) : fmt::format("  {:>{}}", cells[j], width[j]);
    out += "\n";
  };
  line(head);
  for (const auto& r : rows) line(r);
  for (const auto& e : errors) out += e + "\n";
  return out;
}

}  // namespace stepgate
