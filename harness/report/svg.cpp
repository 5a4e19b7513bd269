#include "stepgate/report/svg.hpp"

#include <algorithm>
#include <array>
#include <cmath>

#include <fmt/format.h>

#include "stepgate/report/html_escape.hpp"

namespace stepgate::svg {

std::string num(double v) {
  if (!std::isfinite(v)) v = 0.0;
  const double r = std::round(v * 10.0) / 10.0;
  if (r == 0.0) return "0";
  if (r == std::round(r)) return fmt::format("{:.0f}", r);
  return fmt::format("{:.1f}", r);
}

double LogScale::operator()(double v) const {
  if (!(v > 0.0) || !std::isfinite(v)) return px_lo;
  const double a = std::log10(lo), b = std::log10(hi);
  const double t = b > a ? (std::log10(v) - a) / (b - a) : 0.5;
  return px_lo + t * (px_hi - px_lo);
}

double LinearScale::operator()(double v) const {
  const double t = hi > lo ? (v - lo) / (hi - lo) : 0.5;
  return px_lo + t * (px_hi - px_lo);
}

std::vector<double> decade_ticks(double lo, double hi) {
  std::vector<double> out;
  for (int k : integer_ticks(std::log10(lo) - 1e-9, std::log10(hi) + 1e-9)) out.push_back(std::pow(10.0, k));
  return out;
}

std::vector<int> integer_ticks(double lo, double hi) {
  std::vector<int> out;
  if (!std::isfinite(lo) || !std::isfinite(hi)) return out;
  for (int k = static_cast<int>(std::ceil(lo)); k <= static_cast<int>(std::floor(hi)); ++k) out.push_back(k);
  return out;
}

std::string tick_label(double v) { return fmt::format("{:.4g}", v); }

std::string open(double width, double height, std::string_view label, std::string_view css_class) {
  return fmt::format(
      "<svg xmlns=\"http://www.w3.org/2000/svg\" class=\"{}\" width=\"{}\" height=\"{}\" viewBox=\"0 0 {} {}\" "
      "role=\"img\" aria-label=\"{}\">\n",
      css_class, num(width), num(height), num(width), num(height), html_escape(label));
}

std::string line(double x1, double y1, double x2, double y2, std::string_view attrs) {
  return fmt::format("<line x1=\"{}\" y1=\"{}\" x2=\"{}\" y2=\"{}\" {}/>\n", num(x1), num(y1), num(x2), num(y2), attrs);
}

std::string rect(double x, double y, double w, double h, std::string_view attrs) {
  return fmt::format("<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" {}/>\n", num(x), num(y), num(w), num(h), attrs);
}

std::string rect_titled(double x, double y, double w, double h, std::string_view attrs, std::string_view title) {
  return fmt::format("<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" {}><title>{}</title></rect>\n", num(x),
                     num(y), num(w), num(h), attrs, html_escape(title));
}

std::string text(double x, double y, std::string_view content, std::string_view attrs) {
  return fmt::format("<text x=\"{}\" y=\"{}\"{}{}>{}</text>\n", num(x), num(y), attrs.empty() ? "" : " ", attrs,
                     html_escape(content));
}

std::string polyline(const std::vector<double>& xs, const std::vector<double>& ys, std::string_view attrs) {
  const std::size_t n = std::min(xs.size(), ys.size());
  if (n < 2) return "";
  std::string pts;
  pts.reserve(n * 12);
  for (std::size_t i = 0; i < n; ++i) {
    if (i) pts += ' ';
    pts += num(xs[i]);
    pts += ',';
    pts += num(ys[i]);
  }
  return fmt::format("<polyline points=\"{}\" {}/>\n", pts, attrs);
}

std::string cross(double x, double y, double r, std::string_view attrs) {
  return fmt::format("<path d=\"M{} {}L{} {}M{} {}L{} {}\" {}/>\n", num(x - r), num(y - r), num(x + r), num(y + r),
                     num(x - r), num(y + r), num(x + r), num(y - r), attrs);
}

namespace {

using Triple = std::array<double, 3>;

double to_linear(double c) { return c <= 0.04045 ? c / 12.92 : std::pow((c + 0.055) / 1.055, 2.4); }
double to_srgb(double c) {
  c = std::clamp(c, 0.0, 1.0);
  return c <= 0.0031308 ? 12.92 * c : 1.055 * std::pow(c, 1.0 / 2.4) - 0.055;
}

// sRGB (0..1) to OKLab and back: the matrices of Ottosson (2020).
Triple oklab_from_srgb(const Triple& s) {
  const double r = to_linear(s[0]), g = to_linear(s[1]), b = to_linear(s[2]);
  const double l = std::cbrt(0.4122214708 * r + 0.5363325363 * g + 0.0514459929 * b);
  const double m = std::cbrt(0.2119034982 * r + 0.6806995451 * g + 0.1073969566 * b);
  const double q = std::cbrt(0.0883024619 * r + 0.2817188376 * g + 0.6299787005 * b);
  return {0.2104542553 * l + 0.7936177850 * m - 0.0040720468 * q,
          1.9779984951 * l - 2.4285922050 * m + 0.4505937099 * q,
          0.0259040371 * l + 0.7827717662 * m - 0.8086757660 * q};
}

Triple srgb_from_oklab(const Triple& c) {
  const double l = std::pow(c[0] + 0.3963377774 * c[1] + 0.2158037573 * c[2], 3);
  const double m = std::pow(c[0] - 0.1055613458 * c[1] - 0.0638541728 * c[2], 3);
  const double q = std::pow(c[0] - 0.0894841775 * c[1] - 1.2914855480 * c[2], 3);
  return {to_srgb(4.0767416621 * l - 3.3077115913 * m + 0.2309699292 * q),
          to_srgb(-1.2684380046 * l + 2.6097574011 * m - 0.3413193965 * q),
          to_srgb(-0.0041960863 * l - 0.7034186147 * m + 1.7076147010 * q)};
}

// Lightness, chroma, hue (radians) of an OKLab colour.
Triple lch(const Triple& lab) { return {lab[0], std::hypot(lab[1], lab[2]), std::atan2(lab[2], lab[1])}; }

}  // namespace

std::string sequential_colour(double t) {
  // Light amber (#e9b949) to deep indigo (#2b1d6b): light enough to read as "low", dark enough
  // at the top. Lightness and chroma are interpolated linearly and the hue along the shorter
  // arc (through coral and magenta), so the middle keeps its colour instead of turning grey.
  static const Triple light = lch(oklab_from_srgb({0xe9 / 255.0, 0xb9 / 255.0, 0x49 / 255.0}));
  static const Triple dark = lch(oklab_from_srgb({0x2b / 255.0, 0x1d / 255.0, 0x6b / 255.0}));
  if (!std::isfinite(t)) t = 0.0;
  t = std::clamp(t, 0.0, 1.0);
  constexpr double kPi = 3.14159265358979323846;
  double dh = dark[2] - light[2];
  if (dh > kPi) dh -= 2 * kPi;
  if (dh < -kPi) dh += 2 * kPi;
  const double l = light[0] + t * (dark[0] - light[0]), c = light[1] + t * (dark[1] - light[1]);
  const double h = light[2] + t * dh;
  const Triple s = srgb_from_oklab({l, c * std::cos(h), c * std::sin(h)});
  auto byte = [](double c) { return static_cast<int>(std::lround(c * 255.0)); };
  return fmt::format("#{:02x}{:02x}{:02x}", byte(s[0]), byte(s[1]), byte(s[2]));
}

}  // namespace stepgate::svg
