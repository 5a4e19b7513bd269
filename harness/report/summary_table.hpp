// A plain-text table of the located safe ranges, one line per case, for the terminal.
#pragma once
#include <string>

#include "stepgate/core/results.hpp"
#include "stepgate/gate/findings.hpp"

namespace stepgate {

/// Columns: kSummaryHeadings (report/format.hpp), as report.md and report.html show them. A
/// missing value prints as kMissingMark; a case that failed prints its error below the table.
/// `gate` gives the last column (the worst finding of each case).
std::string summary_table(const Results& results, const GateReport& gate);

}  // namespace stepgate
