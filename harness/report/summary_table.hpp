// A plain-text table of the located safe ranges, one line per case, for the terminal.
#pragma once
#include <string>

#include "stepgate/core/results.hpp"

namespace stepgate {

/// Columns: case, floor, edge, best rate (median iterations), pinned, headroom, reference
/// digits (min LRE). A missing value prints as "-"; a case that failed prints its error.
std::string summary_table(const Results& results);

/// A rate or factor with 4 significant digits, "-" for NaN.
std::string format_number(double v);

}  // namespace stepgate
