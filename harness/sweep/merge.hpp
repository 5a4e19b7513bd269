// Joins the shards of one suite (stepgate run --shard K/N) into the whole suite's results, in
// the plan order a single run would have had.
#pragma once
#include <vector>

#include "stepgate/core/results.hpp"

namespace stepgate {

/// Every shard 1..N of the same suite (same SHA-256), each once. The i-th case of shard K was
/// plan case i·N + K − 1. Throws InputError (naming `paths[i]`) for a missing, repeated or
/// foreign shard.
Results merge_shards(std::vector<Results> shards, const std::vector<std::string>& paths);

}  // namespace stepgate
