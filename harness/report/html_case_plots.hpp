// The three inline SVG figures of a case in report.html: the range bar (safe range now and in
// the baseline, pinned rate, blow-up predicted and measured), the cost per iteration at each
// rate, and the outcome of every run as a rate x seed map. Each returns HTML: the <svg> and
// its legend. Every string from the results is escaped.
#pragma once
#include <string>
#include <string_view>

#include "stepgate/core/outcome.hpp"
#include "stepgate/core/results.hpp"
#include "stepgate/gate/baseline.hpp"
#include "stepgate/gate/findings.hpp"

namespace stepgate {

/// Outcome colours of the report (ours) and a letter for each, so a map is not colour-only.
std::string_view outcome_colour(Outcome o);
char outcome_letter(Outcome o);
/// A value with 4 significant digits; "–" (en dash) for NaN (a value that does not exist).
std::string html_number(double v);

/// The suite chart: one row per case (and per baseline case missing from the results), every
/// safe range on one shared log-rate axis, the baseline's outlined above the current one, with
/// the best rate, the pinned rate and the measured blow-up marked; rows of failing cases in red.
std::string suite_chart_html(const Results& results, const Baseline* baseline, const GateReport& gate);

/// Log-rate axis over every rate of the case and of its baseline entry (`base` may be null):
/// current [floor, edge] filled, baseline [floor, edge] outlined above it, markers for the
/// pinned rate, the predicted blow-up (theory) and the measured blow-up.
std::string range_bar_html(const CaseResult& c, const BaselineCase* base);

/// The most lines the cost plot draws; grid and fixed rates are preferred over edge rates.
inline constexpr std::size_t kMaxCostLines = 24;
/// Cost per iteration of the first seed's runs, one polyline per rate (at most kMaxCostLines),
/// x = log10(iteration + 1), y = log10(J − J*) when J* is known and some gap is positive, else
/// log10 J; non-positive and non-finite values are left out, a diverged line ends with an x.
std::string cost_plot_html(const CaseResult& c);

/// One column per distinct rate (sorted), one row per seed, cells coloured and lettered by
/// outcome, with a hover title (rate, seed, outcome, iterations); the safe range is outlined.
std::string outcome_map_html(const CaseResult& c);

}  // namespace stepgate
