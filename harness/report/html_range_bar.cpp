// The range bar: where the safe range is now, where the baseline had it, and where the
// pinned rate and the blow-up sit, on one log-rate axis, so that a shift shows at a glance.
#include <algorithm>
#include <cmath>
#include <vector>

#include <fmt/format.h>

#include "report/html_case_plots.hpp"
#include "report/html_escape.hpp"
#include "report/svg.hpp"

namespace stepgate {

namespace {

constexpr double kWidth = 960, kHeight = 112;
constexpr double kLeft = 78, kRight = 24;            // room for the row labels
constexpr double kBaseTop = 22, kBaseHeight = 10;    // baseline band (outlined, thinner)
constexpr double kNowTop = 38, kNowHeight = 22;      // current band (filled)
constexpr double kAxisY = 84;

bool positive(double v) { return std::isfinite(v) && v > 0.0; }

// A band from floor to edge; a missing floor starts the band at the axis' left end.
void band(std::string& out, const svg::LogScale& x, double floor, double edge, double top, double height,
          std::string_view attrs) {
  const double x0 = positive(floor) ? x(floor) : x.px_lo;
  const double x1 = x(edge);
  out += svg::rect(x0, top, std::max(2.0, x1 - x0), height, attrs);
}

void marker(std::string& out, double px, std::string_view cls, std::string_view label, bool label_left) {
  out += svg::line(px, 12, px, kAxisY, fmt::format("class=\"{}\"", cls));
  out += svg::text(label_left ? px - 3 : px + 3, 10, label,
                   fmt::format("class=\"mlabel {}\" text-anchor=\"{}\"", cls, label_left ? "end" : "start"));
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
  // Markers: blow-up labels on the top line, left/right of their lines so that two close
  // values do not print over each other; the pinned rate is labelled under the bands.
  const double predicted = c.theory.predicted_blowup, measured = s.blowup;
  const bool both = positive(predicted) && positive(measured);
  if (positive(predicted)) marker(out, x(predicted), "m-pred", "predicted blow-up", !both || predicted <= measured);
  if (positive(measured)) marker(out, x(measured), "m-blow", "blow-up", both && measured < predicted);
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
  out += fmt::format("<span><i class=\"key key-best\"></i>best {}</span>", html_number(s.best_rate));
  out += fmt::format("<span><i class=\"key key-pred\"></i>predicted blow-up {}{}</span>", html_number(predicted),
                     c.theory.rule.empty() ? "" : " (" + html_escape(c.theory.rule) + ")");
  out += fmt::format("<span><i class=\"key key-blow\"></i>measured blow-up {}</span>", html_number(measured));
  out += "</figcaption>\n</figure>\n";
  return out;
}

}  // namespace stepgate
