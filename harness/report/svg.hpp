// Plot primitives for the inline SVG of report.html: scales, elements with coordinates
// rounded to 1 decimal (to keep the file small), decade ticks and the sequential palette.
// Every text given here is escaped; attribute strings are the caller's constants.
#pragma once
#include <string>
#include <string_view>
#include <vector>

namespace stepgate::svg {

/// A coordinate or length with one decimal ("12.3"; "-0" never appears).
std::string num(double v);

/// Maps log10(v) in [log10(lo), log10(hi)] linearly onto [px_lo, px_hi] (px_hi may be < px_lo
/// for a y axis). lo, hi > 0; v <= 0 or non-finite maps to px_lo.
struct LogScale {
  double lo = 1.0, hi = 10.0;
  double px_lo = 0.0, px_hi = 1.0;
  double operator()(double v) const;
};

/// Maps v in [lo, hi] linearly onto [px_lo, px_hi].
struct LinearScale {
  double lo = 0.0, hi = 1.0;
  double px_lo = 0.0, px_hi = 1.0;
  double operator()(double v) const;
};

/// The powers of ten 10^k with lo <= 10^k <= hi (lo, hi > 0).
std::vector<double> decade_ticks(double lo, double hi);
/// The integers k with lo <= k <= hi (for axes already in log10 units).
std::vector<int> integer_ticks(double lo, double hi);
/// A rate or tick value for an axis label: "0.001", "1", "100", "1e-05", "2e+03".
std::string tick_label(double v);

/// <svg ...> with viewBox 0 0 width height, role="img" and an escaped aria-label.
std::string open(double width, double height, std::string_view label, std::string_view css_class);
inline std::string close() { return "</svg>\n"; }
std::string line(double x1, double y1, double x2, double y2, std::string_view attrs);
std::string rect(double x, double y, double w, double h, std::string_view attrs);
/// A rect with a hover <title> (escaped).
std::string rect_titled(double x, double y, double w, double h, std::string_view attrs, std::string_view title);
/// Text, escaped; attrs e.g. `class="tick" text-anchor="middle"`.
std::string text(double x, double y, std::string_view content, std::string_view attrs);
/// A polyline through (xs[i], ys[i]); no element when fewer than 2 points.
std::string polyline(const std::vector<double>& xs, const std::vector<double>& ys, std::string_view attrs);
/// A small "x" of half-size r centred at (x, y).
std::string cross(double x, double y, double r, std::string_view attrs);

/// The sequential palette for rates: t in [0, 1] from light (low rate) to dark (high rate),
/// interpolated in OKLCh (the polar form of OKLab: Ottosson 2020, "A perceptual color space for
/// image processing") from a light amber through coral and magenta to a deep indigo, so that
/// equal steps of t look like about equal steps. Out-of-gamut mixes are clipped. Returns "#rrggbb".
std::string sequential_colour(double t);

}  // namespace stepgate::svg
