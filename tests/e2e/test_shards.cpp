// Shards: --shard 1/2 and 2/2 merged equal the unsharded run (docs/design.md: results are bitwise
// identical whatever --jobs and --shard are); a merge with a shard missing is bad input.
#include <set>

#include "e2e_fixtures.hpp"

using namespace stepgate::e2e;

TEST_CASE("shards: two shards merged equal the unsharded run", "[e2e]") {
  const CachedRun& whole = gate_small_first();
  REQUIRE(whole.cli.exit_code == 0);
  TempDir tmp("shards");
  const std::string suite = quoted(e2e_suite("gate-small.json").string());
  const fs::path s1 = tmp / "s1", s2 = tmp / "s2", merged = tmp / "merged";
  const CliResult r1 = expect_exit("run " + suite + " --quiet --shard 1/2 --out " + quoted(s1.string()), tmp.path(), 0);
  const CliResult r2 = expect_exit("run " + suite + " --quiet --shard 2/2 --out " + quoted(s2.string()), tmp.path(), 0);
  report_time("two shards of gate-small", r1.seconds + r2.seconds);

  const json a = read_json(s1 / "results.json"), b = read_json(s2 / "results.json");
  CHECK(a.at("shard") == "1/2");
  CHECK(b.at("shard") == "2/2");
  // The shards split the cases: none twice, none left out.
  std::multiset<std::string> ids;
  for (const json* part : {&a, &b}) {
    CHECK(part->at("cases").size() >= 1);
    for (const json& c : part->at("cases")) ids.insert(c.at("id").get<std::string>());
  }
  const json full = read_json(whole.results());
  std::multiset<std::string> full_ids;
  for (const json& c : full.at("cases")) full_ids.insert(c.at("id").get<std::string>());
  CHECK(ids == full_ids);

  // A shard alone cannot be accepted.
  expect_exit("accept " + quoted((s1 / "results.json").string()) + " --baseline " + quoted((tmp / "b.json").string()) +
                  " --record " + quoted((tmp / "r.md").string()),
              tmp.path(), 2);
  CHECK_FALSE(fs::exists(tmp / "b.json"));

  const CliResult m = expect_exit("merge " + quoted((s2 / "results.json").string()) + " " +
                                      quoted((s1 / "results.json").string()) + " --out " + quoted(merged.string()),
                                  tmp.path(), 0);
  CHECK(m.out.find("merged 2 shards (5 cases)") != std::string::npos);
  const json joined = read_json(merged / "results.json");
  CHECK(joined.at("shard").is_null());  // a missing value is null, never ""
  CHECK(joined.at("datasets") == full.at("datasets"));  // the data sets of every shard
  CHECK(joined.at("suite") == full.at("suite"));
  REQUIRE(joined.at("cases").size() == full.at("cases").size());
  const json joined_core = without_run_facts(joined), full_core = without_run_facts(full);
  for (std::size_t i = 0; i < full.at("cases").size(); ++i) {
    INFO("case " << full["cases"][i].at("id"));
    CHECK(joined["cases"][i].at("id") == full["cases"][i].at("id"));  // suite order, whatever the shard order
    CHECK(joined["cases"][i].at("summary") == full["cases"][i].at("summary"));
    CHECK(joined_core["cases"][i].at("runs") == full_core["cases"][i].at("runs"));
  }
  // merge writes the reports run writes, and they count the same cases as the unsharded run's.
  for (const char* report : {"report.md", "report.html", "junit.xml"}) {
    INFO(report);
    CHECK(fs::is_regular_file(merged / report));
  }
  const auto tests_attribute = [](const fs::path& junit) {
    const std::string text = read_text(junit);
    const std::size_t at = text.find("tests=\"");
    return at == std::string::npos ? std::string() : text.substr(at, text.find('"', at + 7) - at);
  };
  CHECK_FALSE(tests_attribute(merged / "junit.xml").empty());
  CHECK(tests_attribute(merged / "junit.xml") == tests_attribute(whole.out / "junit.xml"));
  // The merged results gate like the unsharded ones.
  expect_exit(
      "check " + quoted((merged / "results.json").string()) + " --baseline " + quoted(gate_small_baseline().string()),
      tmp.path(), 0);

  {  // merging one shard of two is bad input
    const CliResult one = expect_exit(
        "merge " + quoted((s1 / "results.json").string()) + " --out " + quoted((tmp / "one").string()), tmp.path(), 2);
    CHECK(one.err.find("shard 2/2 is missing") != std::string::npos);
    CHECK_FALSE(fs::exists(tmp / "one" / "results.json"));
  }
  {  // so is merging the same shard twice

    expect_exit("merge " + quoted((s1 / "results.json").string()) + " " + quoted((s1 / "results.json").string()) +
                    " --out " + quoted((tmp / "twice").string()),
                tmp.path(), 2);
  }
  {  // and merging a run that is no shard

    expect_exit("merge " + quoted(whole.results().string()) + " --out " + quoted((tmp / "whole").string()), tmp.path(),
                2);
  }
}
