// The baseline: the accepted picture of a suite's safe ranges, kept under references/
// (default references/<suite>.baseline.json), against which a gate compares new results.
#pragma once
#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "stepgate/core/results.hpp"

namespace stepgate {

inline constexpr const char* kBaselineFormat = "stepgate.baseline/2";
/// Baselines of stepgate 0.1: the same fields, with the host facts under "platform", the min LRE
/// under "reference_digits" and "" for a missing hash. Still read, so that an accepted baseline need not be accepted again.
inline constexpr const char* kBaselineFormatV1 = "stepgate.baseline/1";

/// What a baseline keeps of a case: its safe range (the fields of CaseSummary's SafeRange,
/// declared once there), its data's hash, the agreement with a reference and the prediction.
struct BaselineCase : SafeRange {
  std::string id;
  std::string data_sha256;
  double min_lre = kMissing;  ///< min LRE against the reference values; NaN = no reference
  double predicted_blowup = kMissing;
  /// The seed number whose edge is the case's (the lowest seed edge) and whose floor is the
  /// case's (the highest seed floor): verify mode runs each outside probe on that seed first.
  /// nullopt when there is none (no safe range) or the baseline predates them ("edge_seed",
  /// "floor_seed": null).
  std::optional<std::uint64_t> edge_seed, floor_seed;
};

struct Baseline {
  std::string format = kBaselineFormat;
  SuiteInfo suite;
  ToolInfo tool;
  HostInfo host;  ///< where the accepted results were made (os, machine, cores, kernels)
  std::string accepted;   ///< ISO 8601 UTC, when accepted
  std::string results_started;  ///< when the accepted results were made
  std::vector<BaselineCase> cases;

  const BaselineCase* find(const std::string& id) const;
};

/// The baseline that accepting these results would write (cases that failed to run are left out).
Baseline baseline_from_results(const Results& results, const std::string& accepted_at);

nlohmann::json to_json(const Baseline& b);
/// Throws InputError naming `path` and the JSON pointer of a bad field.
Baseline baseline_from_json(const nlohmann::json& j, const std::string& path);
Baseline read_baseline(const std::string& path);
/// InputError(baseline_path#/suite/name, ...) when the baseline was accepted for another suite
/// (another suite name): comparing them would report every case as added and missing.
void require_same_suite(const Results& results, const Baseline& baseline, const std::string& baseline_path);

}  // namespace stepgate
