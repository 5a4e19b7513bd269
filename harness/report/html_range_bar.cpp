// The range bar: where the safe range is now, where the baseline had it, and where the
// pinned rate and the blow-up sit, on one log-rate axis, so that a shift shows at a glance.
#include <algorithm>
#include <cmath>
#include <utility>
#include <vector>

#include <fmt/format.h>

#include "stepgate/report/html_case_plots.hpp"
#include "stepgate/report/html_escape.hpp"
#include "stepgate/report/svg.hpp"

namespace stepgate {

namespace {

constexpr double kWidth = 960, kHeight = 124;
constexpr double kLeft = 78, kRight = 24;            // room for the row labels
constexpr double kLabelRows[] = {10, 22};            // baselines of the two marker-label rows
constexpr double kBaseTop = 32, kBaseHeight = 10;    // baseline band (outlined, thinner)
constexpr double kNowTop = 48, kNowHeight = 22;      // current band (filled)
constexpr double kAxisY = 96;

bool positive(double v) { return std::isfinite(v) && v > 0.0; }

// A band from floor to edge; a missing floor starts the band at the axis' left end.
void band(std::string& out, const svg::LogScale& x, double floor, double edge, double top, double height,
          std::string_view attrs) {
  const double x0 = positive(floor) ? x(floor) : x.px_lo;
  const double x1 = x(edge);
  out += svg::rect(x0, top, std::max(2.0, x1 - x0), height, attrs);
}

// Marker labels: each takes the first free place among (top row, right of its line), (top
// row, left), (second row, right), (second row, left) that stays inside the figure, so that
// close markers do not print over each other.
class LabelPlacer {
 public:
  void place(std::string& out, double px, std::string_view cls, std::string_view label) {
    const double width = 6.8 * static_cast<double>(label.size()) + 4;  // about 11.5px bold text
    for (int row = 0; row < 2; ++row)
      for (bool left : {false, true}) {
        const double x0 = left ? px - width : px, x1 = left ? px : px + width;
        if (x0 < 0 || x1 > kWidth || collides(row, x0, x1)) continue;
        taken_[row].push_back({x0, x1});
        out += svg::text(left ? px - 3 : px + 3, kLabelRows[row], label,
                         fmt::format("class=\"mlabel {}\" text-anchor=\"{}\"", cls, left ? "end" : "start"));
        return;
      }
  }

 private:
  bool collides(int row, double x0, double x1) const {
    for (const auto& [a, b] : taken_[row])
      if (x0 < b && a < x1) return true;
    return false;
  }
  std::vector<std::pair<double, double>> taken_[2];
};

void marker(std::string& out, LabelPlacer& labels, double px, std::string_view cls, std::string_view label) {
  out += svg::line(px, kLabelRows[0] + 2, px, kAxisY, fmt::format("class=\"{}\"", cls));
  labels.place(out, px, cls, label);
}

}  // namespace

std::string range_bar_html(const CaseResult& c, const BaselineCase* base) {
  const CaseSummary& s = c.summary;
  std::vector<double> rates;
  for (const StoredRun& r : c.runs) rates.push_back(r.record.rate);
  for (double v : {s.floor, s.edge, s.blowup, s.pinned, s.best_rate, c.theory.predicted_blowup}) rates.push_back(v);
  if (base)
    for (double v : {base->floor, base->edge, base->blowup, base->pinned}) rates.push_back(v);
  rates.erase(std::remove_if(rates.begin(), rates.end(), [](double v) { return !positive(v); }), rates.end());
  if (rates.empty()) return "<p class=\"note\">No rate to show.</p>\n";
  const auto [lo, hi] = std::minmax_element(rates.begin(), rates.end());
  const svg::LogScale x{*lo / 1.6, *hi * 1.6, kLeft, kWidth - kRight};

  std::string out = "<figure class=\"rangebar\">\n";
  out += svg::open(kWidth, kHeight, "safe range of " + c.id + " on a log-rate axis", "plot");
  // Axis with decade ticks.
  out += svg::line(x.px_lo, kAxisY, x.px_hi, kAxisY, "class=\"axis\"");
  for (double t : svg::decade_ticks(x.lo, x.hi)) {
    out += svg::line(x(t), kBaseTop - 4, x(t), kAxisY + 4, "class=\"grid\"");
    out += svg::text(x(t), kAxisY + 18, svg::tick_label(t), "class=\"tick\" text-anchor=\"middle\"");
  }
  out += svg::text(kWidth - kRight, kHeight - 2, "rate (log scale)", "class=\"axlabel\" text-anchor=\"end\"");
  // Rows: baseline (thin outline) above current (filled).
  out += svg::text(kLeft - 8, kBaseTop + 9, "baseline", "class=\"rowlabel\" text-anchor=\"end\"");
  out += svg::text(kLeft - 8, kNowTop + 15, "current", "class=\"rowlabel\" text-anchor=\"end\"");
  if (!base) {
    out += svg::text(x.px_lo + 4, kBaseTop + 9, "no baseline", "class=\"muted\"");
  } else if (positive(base->edge)) {
    band(out, x, base->floor, base->edge, kBaseTop, kBaseHeight, "class=\"band-base\"");
    // Guides down from the baseline's ends, so a move of the current band stands out.
    for (double v : {base->floor, base->edge})
      if (positive(v)) out += svg::line(x(v), kBaseTop, x(v), kNowTop + kNowHeight, "class=\"guide\"");
  } else {
    out += svg::text(x.px_lo + 4, kBaseTop + 9, "baseline had no safe rate", "class=\"muted\"");
  }
  if (positive(s.edge)) {
    band(out, x, s.floor, s.edge, kNowTop, kNowHeight, "class=\"band-now\"");
  } else {
    out += svg::text(x.px_lo + 4, kNowTop + 15, "no safe rate", "class=\"warnlabel\"");
  }
  if (positive(s.best_rate))
    out += svg::line(x(s.best_rate), kNowTop + 3, x(s.best_rate), kNowTop + kNowHeight - 3, "class=\"best\"");
  // Markers: blow-up labels above the bands, the pinned rate's under them.
  const double predicted = c.theory.predicted_blowup, measured = s.blowup;
  // Each label names its own line in full ("measured blow-up", "predicted blow-up"); when the
  // two lines are too close for two labels to read apart, one label names both.
  LabelPlacer labels;
  const bool together = positive(measured) && positive(predicted) && std::abs(x(measured) - x(predicted)) < 12.0;
  if (together) {
    out += svg::line(x(predicted), kLabelRows[0] + 2, x(predicted), kAxisY, "class=\"m-pred\"");
    marker(out, labels, x(measured), "m-blow", "measured and predicted blow-up");
  } else {
    if (positive(measured)) marker(out, labels, x(measured), "m-blow", "measured blow-up");
    if (positive(predicted)) marker(out, labels, x(predicted), "m-pred", "predicted blow-up");
  }
  if (positive(s.pinned)) {
    const double px = x(s.pinned);
    out += svg::line(px, kNowTop - 4, px, kAxisY, "class=\"m-pin\"");
    out += fmt::format("<path d=\"M{} {}l-5 8h10z\" class=\"m-pin-head\"/>\n", svg::num(px), svg::num(kNowTop + kNowHeight + 1));
    out += svg::text(px + 7, kNowTop + kNowHeight + 12, "pinned", "class=\"mlabel m-pin\"");
  }
  out += svg::close();

  // The same facts in words beside the key.
  auto range = [](double f, double e) {
    return positive(e) ? fmt::format("[{}, {}]", html_number(f), html_number(e)) : std::string("none");
  };
  out += "<figcaption class=\"legend\">";
  out += fmt::format("<span><i class=\"key key-now\"></i>current {}</span>", range(s.floor, s.edge));
  if (base) out += fmt::format("<span><i class=\"key key-base\"></i>baseline {}</span>", range(base->floor, base->edge));
  out += fmt::format("<span><i class=\"key key-pin\"></i>pinned {}</span>", html_number(s.pinned));
  out += fmt::format("<span><i class=\"key key-best\"></i>best rate {}</span>", html_number(s.best_rate));
  out += fmt::format("<span><i class=\"key key-pred\"></i>predicted blow-up {}{}</span>", html_number(predicted),
                     c.theory.rule.empty() ? "" : " (" + html_escape(c.theory.rule) + ")");
  out += fmt::format("<span><i class=\"key key-blow\"></i>measured blow-up {}</span>", html_number(measured));
  out += "</figcaption>\n</figure>\n";
  return out;
}

}  // namespace stepgate
