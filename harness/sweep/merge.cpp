#include "stepgate/sweep/merge.hpp"

#include <algorithm>
#include <cstdio>

#include <fmt/format.h>

#include "stepgate/core/error.hpp"

namespace stepgate {

Results merge_shards(std::vector<Results> shards, const std::vector<std::string>& paths) {
  if (shards.empty()) throw InputError("command line", "merge needs at least one results file");
  int n = 0;
  std::vector<int> index_of_shard;
  for (std::size_t i = 0; i < shards.size(); ++i) {
    int k = 0, count = 0;
    if (std::sscanf(shards[i].shard.c_str(), "%d/%d", &k, &count) != 2)
      throw InputError(paths[i], "not a shard (its results have no \"shard\": \"K/N\"); only shards are merged");
    if (n == 0) n = count, index_of_shard.assign(static_cast<std::size_t>(n), -1);
    if (count != n) throw InputError(paths[i], fmt::format("shard {} is of {} shards, the others of {}", shards[i].shard, count, n));
    if (shards[i].suite.sha256 != shards[0].suite.sha256)
      throw InputError(paths[i], fmt::format("a shard of another suite file (sha256 {} vs {})", shards[i].suite.sha256,
                                             shards[0].suite.sha256));
    if (index_of_shard[static_cast<std::size_t>(k - 1)] >= 0)
      throw InputError(paths[i], fmt::format("shard {} given twice", shards[i].shard));
    index_of_shard[static_cast<std::size_t>(k - 1)] = static_cast<int>(i);
  }
  for (int k = 1; k <= n; ++k)
    if (index_of_shard[static_cast<std::size_t>(k - 1)] < 0)
      throw InputError("command line", fmt::format("shard {}/{} is missing", k, n));

  Results out = shards[0];
  out.shard.clear();
  out.cases.clear();
  for (const Results& s : shards) {
    out.started = std::min(out.started, s.started);
    out.finished = std::max(out.finished, s.finished);
  }
  for (std::size_t j = 0;; ++j) {
    bool any = false;
    for (int k = 1; k <= n; ++k) {
      Results& s = shards[static_cast<std::size_t>(index_of_shard[static_cast<std::size_t>(k - 1)])];
      if (j < s.cases.size()) out.cases.push_back(std::move(s.cases[j])), any = true;
    }
    if (!any) break;
  }
  return out;
}

}  // namespace stepgate
