// Moves of a located rate (edge, floor, best rate) measured as factors (docs/design.md, "Gate"):
// a halving and a doubling are the same size, and every allowance is a factor too. A relative
// move 1 − now/base can never exceed 1 however far a rate falls; |log(now/base)| grows without
// bound both ways.
#pragma once
#include <string>

namespace stepgate {

/// |log(now/base)|, the size of a move as a log factor: 0 unchanged, log 2 for a halving or a
/// doubling. base, now > 0.
double log_move(double base, double now);

/// The log-distance between the baseline's and the current ragged zone [lo, hi] of the edge:
/// 0 when they overlap, log(now_lo/base_hi) when the current zone lies above, log(base_lo/now_hi)
/// when below. Without a ragged zone lo = hi = the edge, and this is log_move(base, now).
double ragged_move(double base_lo, double base_hi, double now_lo, double now_hi);

/// A relative tolerance t (0.05 = 5%) as the log of the factor 1 + t it allows either way.
double tolerance_log(double t);

/// The move from base to now as its user reads it: "×2" for a doubling, "÷6.5" for a drop to
/// 1/6.5 of base, "×1" when unchanged (4 significant digits).
std::string factor_text(double base, double now);

/// A log factor f either way as "×/÷1.061" (4 significant digits).
std::string either_way_text(double log_factor);

}  // namespace stepgate
