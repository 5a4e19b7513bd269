// Joins the shards of one suite (stepgate run --shard K/N) into the whole suite's results, in
// the plan order a single run would have had.
#pragma once
#include <vector>

#include "stepgate/core/results.hpp"

namespace stepgate {

/// Every shard 1..N of the same suite (same SHA-256), each once. The cases are put back in the
/// order of the whole plan (each shard records it: Results::plan_cases) and the data sets of
/// all shards are joined in the order of first use, so that the merged results equal an
/// unsharded run's. Throws InputError (naming `paths[i]`) for a "shard" that is not K/N with
/// 1 <= K <= N <= kMaxShards, a missing, repeated or foreign shard, a case that is not in the
/// plan or given twice, and a plan case no shard ran.
Results merge_shards(std::vector<Results> shards, const std::vector<std::string>& paths);

}  // namespace stepgate
