// The suite chart at the top of report.html: every case's safe range on one log-rate axis, the
// baseline's range as an outline above the current one, and the pinned rate, the best rate and
// the measured blow-up marked, so that a reviewer sees in one look which cases moved.
#include <algorithm>
#include <cmath>
#include <map>
#include <set>
#include <vector>

#include <fmt/format.h>

#include "stepgate/report/html_case_plots.hpp"
#include "stepgate/report/html_escape.hpp"
#include "stepgate/report/svg.hpp"

namespace stepgate {

namespace {

constexpr double kWidth = 960, kLeft = 300, kRight = 24;
constexpr double kTop = 8, kRow = 28, kAxisRoom = 40;
constexpr double kBaseHeight = 6, kNowTop = 9, kNowHeight = 13;  // within a row
constexpr std::size_t kLabelChars = 44;

bool positive(double v) { return std::isfinite(v) && v > 0.0; }

// Labels are cut to fit the left column, whole on hover (the <title>).
std::string short_label(const std::string& id) {
  if (id.size() <= kLabelChars) return id;
  std::size_t cut = kLabelChars - 1;
  while (cut > 0 && (static_cast<unsigned char>(id[cut]) & 0xC0) == 0x80) --cut;  // not inside a UTF-8 character
  return id.substr(0, cut) + "…";
}

struct Row {
  std::string id;
  const CaseSummary* now = nullptr;  // null: missing from the results, or not run
  const BaselineCase* base = nullptr;
  std::optional<Severity> worst;
  bool not_run = false;
};

void band(std::string& out, const svg::LogScale& x, double floor, double edge, double top, double height,
          std::string_view attrs, const std::string& title) {
  const double x0 = positive(floor) ? x(floor) : x.px_lo;
  out += svg::rect_titled(x0, top, std::max(2.0, x(edge) - x0), height, attrs, title);
}

}  // namespace

std::string suite_chart_html(const Results& results, const Baseline* baseline, const GateReport& gate) {
  // Looked up by id once each (a suite may have hundreds of cases).
  std::map<std::string_view, const BaselineCase*> base;
  if (baseline)
    for (const BaselineCase& b : baseline->cases) base.emplace(b.id, &b);
  std::vector<Row> rows;
  std::set<std::string_view> listed;
  for (const CaseResult& c : results.cases) {
    const auto b = base.find(c.id);
    rows.push_back({c.id, c.error.empty() ? &c.summary : nullptr, b == base.end() ? nullptr : b->second,
                    gate.worst(c.id), !c.error.empty()});
    listed.insert(c.id);
  }
  if (baseline)  // cases only the baseline has, after the current ones
    for (const BaselineCase& b : baseline->cases)
      if (!listed.count(b.id)) rows.push_back({b.id, nullptr, &b, gate.worst(b.id), false});
  std::vector<double> rates;
  for (const Row& r : rows) {
    if (r.now)
      for (double v : {r.now->floor, r.now->edge, r.now->blowup, r.now->pinned, r.now->best_rate}) rates.push_back(v);
    if (r.base)
      for (double v : {r.base->floor, r.base->edge, r.base->blowup, r.base->pinned}) rates.push_back(v);
  }
  rates.erase(std::remove_if(rates.begin(), rates.end(), [](double v) { return !positive(v); }), rates.end());
  if (rows.empty() || rates.empty()) return "<p class=\"note\">No case has a rate to show.</p>\n";
  const auto [lo, hi] = std::minmax_element(rates.begin(), rates.end());
  const svg::LogScale x{*lo / 1.6, *hi * 1.6, kLeft, kWidth - kRight};
  const double height = kTop + kRow * static_cast<double>(rows.size()) + kAxisRoom;
  const double axis_y = kTop + kRow * static_cast<double>(rows.size()) + 4;

  std::string out = "<figure class=\"suitechart\">\n";
  out += svg::open(kWidth, height, "safe range of every case on one log-rate axis", "plot");
  for (double t : svg::decade_ticks(x.lo, x.hi)) {
    out += svg::line(x(t), kTop - 4, x(t), axis_y, "class=\"grid\"");
    out += svg::text(x(t), axis_y + 16, svg::tick_label(t), "class=\"tick\" text-anchor=\"middle\"");
  }
  out += svg::line(x.px_lo, axis_y, x.px_hi, axis_y, "class=\"axis\"");
  out += svg::text(kWidth - kRight, height - 4, "rate (log scale)", "class=\"axlabel\" text-anchor=\"end\"");
  for (std::size_t i = 0; i < rows.size(); ++i) {
    const Row& r = rows[i];
    const double top = kTop + kRow * static_cast<double>(i);
    const std::string_view sev = r.worst ? to_string(*r.worst) : "none";
    out += fmt::format("<g class=\"row sev-{}\"><title>{}</title>\n", sev, html_escape(r.id + ": " + std::string(sev)));
    out += svg::text(kLeft - 8, top + kNowTop + 10, short_label(r.id),
                     fmt::format("class=\"rowlabel {}\" text-anchor=\"end\"", r.worst == Severity::fail ? "warnlabel" : ""));
    if (r.base && positive(r.base->edge))
      band(out, x, r.base->floor, r.base->edge, top + 1, kBaseHeight, "class=\"band-base\"",
           fmt::format("baseline [{}, {}]", html_number(r.base->floor), html_number(r.base->edge)));
    if (r.now && positive(r.now->edge)) {
      band(out, x, r.now->floor, r.now->edge, top + kNowTop, kNowHeight, "class=\"band-now\"",
           fmt::format("current [{}, {}]", html_number(r.now->floor), html_number(r.now->edge)));
    } else {
      const char* why = r.not_run ? "not run" : !r.now ? "missing from the results" : "no safe rate";
      out += svg::text(x.px_lo + 4, top + kNowTop + 10, why, "class=\"muted\"");
    }
    if (r.now && positive(r.now->best_rate))
      out += svg::line(x(r.now->best_rate), top + kNowTop + 2, x(r.now->best_rate), top + kNowTop + kNowHeight - 2,
                       "class=\"best\"");
    if (r.now && positive(r.now->blowup))
      out += svg::cross(x(r.now->blowup), top + kNowTop + kNowHeight / 2, 4, "class=\"m-blow\"");
    if (r.now && positive(r.now->pinned)) {
      const double px = x(r.now->pinned);
      out += fmt::format("<path d=\"M{} {}l-4 6h8z\" class=\"m-pin-head\"/>\n", svg::num(px),
                         svg::num(top + kNowTop + kNowHeight));
    }
    out += "</g>\n";
  }
  out += svg::close();
  out += "<figcaption class=\"legend\"><span><i class=\"key key-now\"></i>current safe range [floor, edge]</span>"
         "<span><i class=\"key key-base\"></i>baseline safe range</span>"
         "<span><i class=\"key key-best\"></i>best rate</span>"
         "<span><i class=\"key key-pin\"></i>pinned rate (triangle)</span>"
         "<span><i class=\"key key-blow\"></i>measured blow-up (×)</span>"
         "<span>case names in red have a failing finding</span></figcaption>\n</figure>\n";
  return out;
}

}  // namespace stepgate
