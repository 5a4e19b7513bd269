#include "stepgate/sweep/merge.hpp"

#include <algorithm>
#include <map>
#include <set>
#include <tuple>

#include <fmt/format.h>

#include "stepgate/core/error.hpp"
#include "stepgate/core/gate_tolerances_json.hpp"
#include "stepgate/sweep/plan.hpp"

namespace stepgate {

namespace {

// Shards of one run come from one stepgate build, read the same data and gate with the same
// tolerances; a merge of anything else would keep the first shard's fields silently.
void refuse_mixed_shards(const Results& first, const Results& other, const std::string& first_path,
                         const std::string& path) {
  const auto differ = [&](const std::string& pointer, const std::string& mine, const std::string& theirs) {
    throw InputError(path + "#" + pointer, fmt::format("is '{}' here and '{}' in {}; expected shards of one run (one "
                                                       "stepgate build, the same data sets and gate tolerances)",
                                                       mine, theirs, first_path));
  };
  for (auto [key, mine, theirs] : {std::tuple{"version", &other.tool.version, &first.tool.version},
                                   std::tuple{"compiler", &other.tool.compiler, &first.tool.compiler},
                                   std::tuple{"build", &other.tool.build, &first.tool.build}})
    if (*mine != *theirs) differ(std::string("/tool/") + key, *mine, *theirs);
  if (const auto a = to_json(other.gate).dump(), b = to_json(first.gate).dump(); a != b) differ("/gate", a, b);
  for (std::size_t i = 0; i < other.datasets.size(); ++i)
    for (const DatasetInfo& d : first.datasets)
      if (d.name == other.datasets[i].name && d.sha256 != other.datasets[i].sha256)
        differ(fmt::format("/datasets/{}/sha256", i), other.datasets[i].sha256, d.sha256);
}

}  // namespace

Results merge_shards(std::vector<Results> shards, const std::vector<std::string>& paths) {
  if (shards.empty()) throw InputError("command line", "merge needs at least one results file");
  // Every "shard" field is validated before it is used as a count or an index.
  std::vector<std::pair<int, int>> kn;
  for (std::size_t i = 0; i < shards.size(); ++i) {
    if (shards[i].shard.empty())
      throw InputError(paths[i] + "#/shard", "not a shard (its results have no \"shard\": \"K/N\"); only shards are merged");
    const auto parsed = parse_shard(shards[i].shard);
    if (!parsed)
      throw InputError(paths[i] + "#/shard", fmt::format("expected \"K/N\" with 1 <= K <= N <= {}, found \"{}\"",
                                                         kMaxShards, shards[i].shard));
    kn.push_back(*parsed);
  }
  const int n = kn[0].second;
  if (shards.size() > static_cast<std::size_t>(n))
    throw InputError("command line", fmt::format("{} files given for {} shards", shards.size(), n));
  std::vector<int> index_of_shard(static_cast<std::size_t>(n), -1);
  for (std::size_t i = 0; i < shards.size(); ++i) {
    const auto [k, count] = kn[i];
    if (count != n) throw InputError(paths[i] + "#/shard", fmt::format("shard {} is of {} shards, the others of {}", shards[i].shard, count, n));
    if (shards[i].suite.sha256 != shards[0].suite.sha256 || shards[i].suite.name != shards[0].suite.name)
      throw InputError(paths[i], fmt::format("a shard of another suite file ('{}', sha256 {} against '{}', {})",
                                             shards[i].suite.name, shards[i].suite.sha256, shards[0].suite.name,
                                             shards[0].suite.sha256));
    refuse_mixed_shards(shards[0], shards[i], paths[0], paths[i]);
    if (shards[i].plan_cases != shards[0].plan_cases)
      throw InputError(paths[i] + "#/plan_cases", "lists another plan than the first shard's; expected shards of one run");
    if (index_of_shard[static_cast<std::size_t>(k - 1)] >= 0)
      throw InputError(paths[i], fmt::format("shard {} given twice", shards[i].shard));
    index_of_shard[static_cast<std::size_t>(k - 1)] = static_cast<int>(i);
  }
  for (int k = 1; k <= n; ++k)
    if (index_of_shard[static_cast<std::size_t>(k - 1)] < 0)
      throw InputError("command line", fmt::format("shard {}/{} is missing", k, n));

  // Cases back in plan order.
  const std::vector<std::string>& plan = shards[0].plan_cases;
  std::map<std::string, std::size_t> position;
  for (std::size_t i = 0; i < plan.size(); ++i)
    if (!position.emplace(plan[i], i).second)
      throw InputError(paths[0] + "#/plan_cases", fmt::format("lists the case '{}' twice", plan[i]));
  std::vector<std::optional<CaseResult>> ordered(plan.size());
  for (std::size_t i = 0; i < shards.size(); ++i)
    for (std::size_t j = 0; j < shards[i].cases.size(); ++j) {
      CaseResult& c = shards[i].cases[j];
      const auto at = position.find(c.id);
      const std::string where = fmt::format("{}#/cases/{}/id", paths[i], j);
      if (at == position.end()) throw InputError(where, fmt::format("the case '{}' is not in the suite's plan", c.id));
      if (ordered[at->second]) throw InputError(where, fmt::format("the case '{}' is given twice", c.id));
      ordered[at->second] = std::move(c);
    }

  Results out = shards[0];
  out.shard.clear();
  out.plan_cases.clear();
  out.cases.clear();
  out.datasets.clear();
  for (const Results& s : shards) {
    out.started = std::min(out.started, s.started);
    out.finished = std::max(out.finished, s.finished);
    if (!(s.wall_seconds <= out.wall_seconds)) out.wall_seconds = s.wall_seconds;  // NaN-safe max
  }
  for (std::size_t i = 0; i < ordered.size(); ++i) {
    if (!ordered[i]) throw InputError("command line", fmt::format("no shard holds the case '{}'", plan[i]));
    out.cases.push_back(std::move(*ordered[i]));
  }
  // Data sets in the order an unsharded run lists them: by first use in plan order.
  std::map<std::string, const DatasetInfo*> datasets;
  for (const Results& s : shards)
    for (const DatasetInfo& d : s.datasets) datasets.emplace(d.name, &d);
  std::set<std::string> listed;
  for (const CaseResult& c : out.cases)
    if (auto it = datasets.find(c.dataset); it != datasets.end() && listed.insert(c.dataset).second)
      out.datasets.push_back(*it->second);
  return out;
}

}  // namespace stepgate
