// The range a numeric setting must lie in, declared once beside its key in each struct's field
// table (gate tolerances, optimizer and schedule parameters, rates, outcome settings, run
// settings). The same Range checks a suite's value, a library caller's value (validate()) and
// writes the words of the message ("expected a number in [0, 1)").
#pragma once
#include <limits>
#include <string>

namespace stepgate {

struct Range {
  static constexpr double kInf = std::numeric_limits<double>::infinity();
  double min = -kInf, max = kInf;
  bool min_open = false;  ///< the range excludes min
  bool max_open = false;  ///< the range excludes max (an infinite bound is always excluded)
  bool whole = false;     ///< whole numbers only (counts, iterations)

  /// v lies in the range (false for NaN, and for a fraction when `whole`).
  bool admits(double v) const;
  /// The range in words: "in [0, 1)", ">= 1", "> 0", "in 1..16" (whole), "" when unbounded.
  std::string words() const;
  /// What a value must be, for "expected ...": "a number in [0, 1)", "a whole number >= 1".
  std::string expected() const;

  // The usual shapes, named for reading the tables.
  static constexpr Range at_least(double lo) { return {lo, kInf, false, true, false}; }
  static constexpr Range above(double lo) { return {lo, kInf, true, true, false}; }
  static constexpr Range closed(double lo, double hi) { return {lo, hi, false, false, false}; }
  static constexpr Range half_open(double lo, double hi) { return {lo, hi, false, true, false}; }  ///< [lo, hi)
  static constexpr Range open_closed(double lo, double hi) { return {lo, hi, true, false, false}; }  ///< (lo, hi]
  static constexpr Range count_at_least(long lo) { return {double(lo), kInf, false, true, true}; }
  static constexpr Range count_in(long lo, long hi) { return {double(lo), double(hi), false, false, true}; }
  static constexpr Range any() { return {}; }
};

}  // namespace stepgate
