// The verification record (reports/<suite>.record.md by default, written by `stepgate accept`):
// a human-readable history of what was verified, on which data, with which tool and host.
// Every acceptance adds one entry; older entries are never rewritten.
#pragma once
#include <string>

#include "stepgate/core/results.hpp"
#include "stepgate/gate/baseline.hpp"

namespace stepgate {

/// One Markdown section (a "### " heading and its body, ending in a newline) for one
/// acceptance: date (baseline.accepted), suite name, path and full sha256, tool version,
/// compiler and build, platform; per case the rates verified (floor, edge with its bracket,
/// best, pinned, headroom, blow-up, reference digits and source) and the data they were verified
/// on (data set name and full sha256); cases that could not be run are named as not verified;
/// then the scope warning. Rates come from `baseline` (what was accepted), names from `results`.
/// Numbers have 4 significant digits (the baseline file keeps full precision); "–" = none.
/// Suite strings are put on one line, with & and < written as &amp; and &lt;.
std::string render_record_entry(const Results& results, const Baseline& baseline);

/// The record text after adding `entry`. An empty (or all-whitespace) record becomes the title
/// "# Verification record: <suite_name>", an explanatory paragraph, a "## History" heading and
/// the entry. Otherwise the entry goes right after the first "## History" heading line (newest
/// first) and everything else is kept byte for byte; a record without that heading gets one
/// appended at its end. Entries are separated by one blank line.
std::string append_record(const std::string& existing_record_text, const std::string& suite_name,
                          const std::string& entry);

}  // namespace stepgate
