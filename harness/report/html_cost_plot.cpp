// The cost plot: how each rate's run of the first seed went down (or up), on log-log axes,
// coloured from light (low rate) to dark (high rate).
#include <algorithm>
#include <cmath>
#include <limits>
#include <map>
#include <vector>

#include <fmt/format.h>

#include "stepgate/report/html_case_plots.hpp"
#include "stepgate/report/html_escape.hpp"
#include "stepgate/report/svg.hpp"

namespace stepgate {

namespace {

constexpr double kWidth = 960, kHeight = 340;
constexpr double kLeft = 58, kTop = 14, kPlotRight = 700, kBottom = 300;
constexpr double kLegendX = 724;
constexpr double kMaxDecades = 40;  // below that, the bottom of the y axis is cut off

// The runs to draw: seed index 0, one per rate, grid and fixed first, then edge runs while
// there is room, thinned evenly when even grid and fixed are too many.
std::vector<const StoredRun*> pick_runs(const CaseResult& c) {
  std::map<double, const StoredRun*> preferred, extra;
  for (const StoredRun& r : c.runs) {
    if (r.record.seed_index != 0) continue;
    if (r.role == RunRole::grid || r.role == RunRole::fixed) preferred.emplace(r.record.rate, &r);
    else if (r.role == RunRole::edge) extra.emplace(r.record.rate, &r);
  }
  std::vector<const StoredRun*> out;
  for (const auto& [rate, r] : preferred) out.push_back(r);
  if (out.size() > kMaxCostLines) {
    std::vector<const StoredRun*> thinned;
    for (std::size_t i = 0; i < kMaxCostLines; ++i)
      thinned.push_back(out[i * (out.size() - 1) / (kMaxCostLines - 1)]);
    out = std::move(thinned);
  }
  for (const auto& [rate, r] : extra) {
    if (out.size() >= kMaxCostLines) break;
    if (!preferred.count(rate)) out.push_back(r);
  }
  std::sort(out.begin(), out.end(), [](const StoredRun* a, const StoredRun* b) { return a->record.rate < b->record.rate; });
  return out;
}

// Non-positive and non-finite values are left out of a log plot.
double log_or_nan(double v) { return std::isfinite(v) && v > 0.0 ? std::log10(v) : std::numeric_limits<double>::quiet_NaN(); }

}  // namespace

std::string cost_plot_html(const CaseResult& c) {
  const std::vector<const StoredRun*> runs = pick_runs(c);
  if (runs.empty()) return "<h3>Cost per iteration, first seed</h3>\n<p class=\"note\">No run of the first seed to plot.</p>\n";
  // Gaps when J* is known and at least one is positive, otherwise the cost itself.
  bool use_gap = false;
  if (std::isfinite(c.optimum_cost))
    for (const StoredRun* r : runs)
      for (const TracePoint& p : r->record.trace) use_gap = use_gap || p.cost - c.optimum_cost > 0.0;
  auto value = [&](const TracePoint& p) { return log_or_nan(use_gap ? p.cost - c.optimum_cost : p.cost); };

  double y_lo = kInf, y_hi = -kInf, x_hi = 1.0;
  for (const StoredRun* r : runs)
    for (const TracePoint& p : r->record.trace) {
      const double v = value(p);
      if (std::isnan(v)) continue;
      y_lo = std::min(y_lo, v);
      y_hi = std::max(y_hi, v);
      x_hi = std::max(x_hi, static_cast<double>(p.iter + 1));
    }
  if (!std::isfinite(y_lo))
    return "<h3>Cost per iteration, first seed</h3>\n<p class=\"note\">No positive, finite value to plot.</p>\n";
  y_lo = std::max(std::floor(y_lo), std::ceil(y_hi) - kMaxDecades);
  y_hi = std::max(std::ceil(y_hi), y_lo + 1.0);
  const svg::LogScale x{1.0, std::pow(10.0, std::ceil(std::log10(x_hi) * 4.0) / 4.0), kLeft, kPlotRight};
  const svg::LinearScale y{y_lo, y_hi, kBottom, kTop};

  const std::string what = use_gap ? "cost − optimum" : "cost";
  std::string out = fmt::format("<h3>{} per iteration, first seed</h3>\n<figure class=\"costplot\">\n",
                                use_gap ? "Cost − optimum (log scale)" : "Cost (log scale)");
  out += svg::open(kWidth, kHeight, "log10 of " + what + " per iteration at each rate, " + c.id, "plot");
  out += svg::rect(kLeft, kTop, kPlotRight - kLeft, kBottom - kTop, "class=\"frame\"");
  for (double t : svg::decade_ticks(x.lo, x.hi)) {
    out += svg::line(x(t), kTop, x(t), kBottom, "class=\"grid\"");
    out += svg::text(x(t), kBottom + 16, svg::tick_label(t), "class=\"tick\" text-anchor=\"middle\"");
  }
  const std::vector<int> yt = svg::integer_ticks(y_lo, y_hi);
  const std::size_t step = std::max<std::size_t>(1, (yt.size() + 7) / 8);
  for (std::size_t i = 0; i < yt.size(); i += step) {
    out += svg::line(kLeft, y(yt[i]), kPlotRight, y(yt[i]), "class=\"grid\"");
    out += svg::text(kLeft - 6, y(yt[i]) + 4, fmt::format("1e{}", yt[i]), "class=\"tick\" text-anchor=\"end\"");
  }
  out += svg::text((kLeft + kPlotRight) / 2, kHeight - 8, "iteration + 1 (log scale)", "class=\"axlabel\" text-anchor=\"middle\"");
  out += fmt::format("<text class=\"axlabel\" text-anchor=\"middle\" transform=\"translate(14 {}) rotate(-90)\">{}</text>\n",
                     svg::num((kTop + kBottom) / 2), html_escape(what + " (log scale)"));

  // One colour per line by its rank in rate: ranks spread the palette evenly even when the
  // rates cluster.
  const double top_rank = static_cast<double>(std::max<std::size_t>(1, runs.size() - 1));
  out += "<g class=\"lines\">\n";
  for (std::size_t i = 0; i < runs.size(); ++i) {
    const RunRecord& r = runs[i]->record;
    const std::string colour = svg::sequential_colour(static_cast<double>(i) / top_rank);
    std::vector<double> xs, ys;
    for (const TracePoint& p : r.trace) {
      const double v = value(p);
      if (std::isnan(v)) continue;
      xs.push_back(x(static_cast<double>(p.iter + 1)));
      ys.push_back(y(std::max(v, y_lo)));
    }
    out += svg::polyline(xs, ys, fmt::format("stroke=\"{}\"", colour));
    if (xs.size() == 1)  // a single point still shows
      out += svg::rect(xs[0] - 1.5, ys[0] - 1.5, 3, 3, fmt::format("fill=\"{}\"", colour));
    if (r.outcome == Outcome::diverged && !xs.empty())
      out += svg::cross(xs.back(), ys.back(), 4, fmt::format("class=\"endx\" stroke=\"{}\"", colour));
  }
  out += "</g>\n";
  // Legend: rate -> colour, outcome letter and name.
  const double row = std::min(13.0, (kBottom - kTop) / static_cast<double>(runs.size() + 1));
  out += svg::text(kLegendX, kTop + 8, "rate · outcome (first seed)", "class=\"legtitle\"");
  for (std::size_t i = 0; i < runs.size(); ++i) {
    const RunRecord& r = runs[i]->record;
    const double ly = kTop + 8 + row * static_cast<double>(i + 1);
    out += svg::line(kLegendX, ly - 4, kLegendX + 22, ly - 4,
                     fmt::format("stroke=\"{}\" class=\"legline\"", svg::sequential_colour(static_cast<double>(i) / top_rank)));
    std::string label = fmt::format("{}  {} {}", html_number(r.rate), outcome_letter(r.outcome), to_string(r.outcome));
    if (r.iterations) label += fmt::format(" ({} it)", *r.iterations);
    out += svg::text(kLegendX + 28, ly, label, "class=\"legtext\"");
  }
  out += svg::close();
  out += fmt::format(
      "<figcaption class=\"note\">First seed, {} of its rates (grid and fixed rates first); x: iteration + 1 on a "
      "log scale; y: log10 of {}{}; values that are not positive and finite are left out; "
      "<span class=\"xmark\">×</span> ends a diverged run.</figcaption>\n</figure>\n",
      runs.size(), html_escape(what),
      use_gap                          ? fmt::format(" (optimum {})", html_number(c.optimum_cost))
      : std::isfinite(c.optimum_cost) ? std::string()
                                       : " (no optimum known, hence no gap; curvature " + html_escape(c.theory.method) + ")");
  return out;
}

}  // namespace stepgate
