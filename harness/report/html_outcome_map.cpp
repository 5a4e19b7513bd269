// The outcome map: every run of a case as one cell, rate across and seed down, so that the
// safe range and the seeds that disagree are visible at once.
#include <algorithm>
#include <cmath>
#include <map>
#include <set>
#include <utility>
#include <vector>

#include <fmt/format.h>

#include "stepgate/report/html_case_plots.hpp"
#include "stepgate/report/svg.hpp"

namespace stepgate {

std::string_view outcome_colour(Outcome o) {
  switch (o) {
    case Outcome::converged: return "#3f9e7a";    // sea green
    case Outcome::slow: return "#d9c27a";         // straw
    case Outcome::oscillating: return "#9b7fc9";  // lavender
    case Outcome::diverged: return "#c8483e";     // brick
    case Outcome::failed: return "#4d4d4d";       // graphite
  }
  return "#4d4d4d";
}

char outcome_letter(Outcome o) {
  switch (o) {
    case Outcome::converged: return 'C';
    case Outcome::slow: return 'S';
    case Outcome::oscillating: return 'O';
    case Outcome::diverged: return 'D';
    case Outcome::failed: return 'F';
  }
  return 'F';
}

namespace {

constexpr double kLeft = 70, kTop = 22, kRowHeight = 20, kRight = 12;
constexpr double kMaxGridWidth = 850;

// Where two runs share a rate and a seed (a grid rate asked again by the bracketing), the
// cell shows the worse outcome: what a gate would have to assume.
bool worse(Outcome a, Outcome b) { return static_cast<int>(a) > static_cast<int>(b); }

}  // namespace

std::string outcome_map_html(const CaseResult& c) {
  std::set<double> rate_set;
  std::set<long> seed_set;
  std::map<std::pair<long, double>, const RunRecord*> cell;
  for (const StoredRun& s : c.runs) {
    const RunRecord& r = s.record;
    rate_set.insert(r.rate);
    seed_set.insert(r.seed_index);
    auto [it, fresh] = cell.emplace(std::make_pair(r.seed_index, r.rate), &r);
    if (!fresh && worse(r.outcome, it->second->outcome)) it->second = &r;
  }
  if (rate_set.empty()) return "<p class=\"note\">No run.</p>\n";
  const std::vector<double> rates(rate_set.begin(), rate_set.end());
  const std::vector<long> seeds(seed_set.begin(), seed_set.end());
  const double cw = std::clamp(kMaxGridWidth / static_cast<double>(rates.size()), 11.0, 26.0);
  const double grid_w = cw * static_cast<double>(rates.size());
  const double grid_h = kRowHeight * static_cast<double>(seeds.size());
  const double label_h = 58;  // rotated rate labels under the grid
  const double width = kLeft + grid_w + kRight, height = kTop + grid_h + label_h;
  const double letter_size = cw < 17 ? 9 : 11;

  auto seed_name = [&](long index) {
    const auto& ss = c.summary.seeds;
    return index >= 0 && static_cast<std::size_t>(index) < ss.size() ? fmt::format("seed {}", ss[index].seed)
                                                                     : fmt::format("seed #{}", index + 1);
  };
  auto col_x = [&](std::size_t j) { return kLeft + cw * static_cast<double>(j); };

  std::string out = "<figure class=\"outmap\">\n<div class=\"scroll\">\n";
  // The letters go in one group after the cells, so their shared attributes are written once.
  std::string letters = fmt::format("<g class=\"cellletter\" font-size=\"{}\" text-anchor=\"middle\">\n", letter_size);
  out += svg::open(width, height, "outcome of every run of " + c.id + " by rate and seed", "plot");
  for (std::size_t i = 0; i < seeds.size(); ++i) {
    const double ty = kTop + kRowHeight * static_cast<double>(i);
    out += svg::text(kLeft - 6, ty + 14, seed_name(seeds[i]), "class=\"rowlabel\" text-anchor=\"end\"");
    for (std::size_t j = 0; j < rates.size(); ++j) {
      const auto it = cell.find({seeds[i], rates[j]});
      if (it == cell.end()) {
        out += svg::rect_titled(col_x(j) + 0.5, ty + 0.5, cw - 1, kRowHeight - 1, "class=\"cell-none\"",
                                fmt::format("rate {}, {}: not run", html_number(rates[j]), seed_name(seeds[i])));
        continue;
      }
      const RunRecord& r = *it->second;
      std::string title = fmt::format("rate {}, {}: {}", html_number(r.rate), seed_name(seeds[i]), to_string(r.outcome));
      title += r.iterations ? fmt::format(", {} iterations", *r.iterations) : fmt::format(", {} steps run", r.steps);
      if (r.confirmation)
        title += r.confirmation->method == "stretch+probe"
                     ? fmt::format(", confirmed to iteration {} with a probe (kick x{:.3g})", r.confirmation->until,
                                   r.confirmation->probe_growth)
                     : fmt::format(", confirmed to iteration {} (stretch only)", r.confirmation->until);
      if (r.log_lines > 0) title += fmt::format(", {} log lines", r.log_lines);
      if (!r.reason.empty()) title += " — " + r.reason;
      out += svg::rect_titled(col_x(j) + 0.5, ty + 0.5, cw - 1, kRowHeight - 1,
                              fmt::format("fill=\"{}\"", outcome_colour(r.outcome)), title);
      letters += svg::text(col_x(j) + cw / 2, ty + 14, std::string(1, outcome_letter(r.outcome)),
                           r.outcome == Outcome::slow ? "class=\"dark\"" : "");
    }
  }
  out += letters + "</g>\n";
  // The case's safe range [floor, edge] outlined across all seeds, and the pinned column.
  const CaseSummary& s = c.summary;
  auto first_at_or_above = [&](double v) {
    return static_cast<std::size_t>(std::lower_bound(rates.begin(), rates.end(), v * (1 - 1e-12)) - rates.begin());
  };
  auto last_at_or_below = [&](double v) {
    return static_cast<std::size_t>(std::upper_bound(rates.begin(), rates.end(), v * (1 + 1e-12)) - rates.begin());
  };
  if (std::isfinite(s.edge)) {
    const std::size_t j0 = std::isfinite(s.floor) ? first_at_or_above(s.floor) : 0, j1 = last_at_or_below(s.edge);
    if (j1 > j0) {
      out += svg::rect(col_x(j0), kTop - 1.5, cw * static_cast<double>(j1 - j0), grid_h + 3, "class=\"safe-outline\"");
      out += svg::text(col_x(j0) + 2, kTop - 5, "safe range", "class=\"mlabel safe-label\"");
    }
  }
  if (std::isfinite(s.pinned)) {
    const std::size_t j = first_at_or_above(s.pinned);
    if (j < rates.size() && std::abs(rates[j] / s.pinned - 1.0) < 1e-9) {
      const double px = col_x(j) + cw / 2;
      out += fmt::format("<path d=\"M{} {}l-4 -7h8z\" class=\"m-pin-head\"><title>pinned rate {}</title></path>\n",
                         svg::num(px), svg::num(kTop - 1), html_number(s.pinned));
    }
  }
  for (std::size_t j = 0; j < rates.size(); ++j) {
    const double px = col_x(j) + cw / 2 + 3, py = kTop + grid_h + 6;
    out += fmt::format("<text class=\"tick\" text-anchor=\"end\" transform=\"translate({} {}) rotate(-60)\">{}</text>\n",
                       svg::num(px), svg::num(py), html_number(rates[j]));
  }
  out += svg::close();
  out += "</div>\n<figcaption class=\"legend\">";
  for (Outcome o : {Outcome::converged, Outcome::slow, Outcome::oscillating, Outcome::diverged, Outcome::failed})
    out += fmt::format("<span><i class=\"key\" style=\"background:{}\"></i>{} {}</span>", outcome_colour(o),
                       outcome_letter(o), to_string(o));
  bool probed = false;
  for (const StoredRun& s : c.runs)
    if (s.record.confirmation && s.record.confirmation->method == "stretch+probe") probed = true;
  out += probed ? "<span>C: the criterion held through a confirmation stretch, with a kicked probe beside it "
                  "that did not grow (hover a cell for how)</span>"
                : "<span>C: the criterion held through a confirmation stretch (no probe: hover a cell for how)</span>";
  out += "<span><i class=\"key key-none\"></i>not run</span><span><i class=\"key key-safe\"></i>safe range</span>"
         "<span><i class=\"key key-pinmark\"></i>pinned rate</span>";
  out += "</figcaption>\n</figure>\n";
  return out;
}

}  // namespace stepgate
