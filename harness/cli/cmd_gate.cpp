// stepgate check RESULTS --baseline FILE
// stepgate report RESULTS [--baseline FILE] [--out DIR]
// stepgate accept RESULTS [--baseline FILE] [--record FILE]
// stepgate merge RESULTS... --out DIR
#include <unistd.h>

#include <filesystem>
#include <fstream>
#include <iostream>
#include <sstream>

#include <fmt/format.h>
#include <fmt/ranges.h>

#include "stepgate/cli/commands.hpp"
#include "stepgate/cli/gate_output.hpp"
#include "stepgate/cli/options.hpp"
#include "stepgate/core/error.hpp"
#include "stepgate/core/input_file.hpp"
#include "stepgate/core/output_files.hpp"
#include "stepgate/report/record.hpp"
#include "stepgate/sweep/merge.hpp"

namespace stepgate::cli {

namespace fs = std::filesystem;

int check_command(const Args& args) {
  po::options_description opt("check options");
  opt.add_options()("results", po::value<std::string>()->required(), "results.json")
      ("baseline", po::value<std::string>()->required(), "accepted baseline (references/SUITE.baseline.json)");
  po::positional_options_description pos;
  pos.add("results", 1);
  const Parsed p = parse_options(args, opt, pos, "stepgate check RESULTS --baseline FILE");
  if (p.help) return kExitPass;
  const Results results = read_results(p.vm["results"].as<std::string>());
  const Baseline baseline = read_baseline(p.vm["baseline"].as<std::string>());
  require_same_suite(results, baseline, p.vm["baseline"].as<std::string>());
  const GateReport gate = apply_gate(results, &baseline);
  print_run_failures(results);
  print_findings(gate, results);
  return gate.pass ? kExitPass : kExitFail;
}

int report_command(const Args& args) {
  po::options_description opt("report options");
  opt.add_options()("results", po::value<std::string>()->required(), "results.json")
      ("baseline", po::value<std::string>(), "accepted baseline to compare with")
      ("out", po::value<std::string>(), "output folder (default: the folder of RESULTS)");
  po::positional_options_description pos;
  pos.add("results", 1);
  const Parsed p = parse_options(args, opt, pos, "stepgate report RESULTS [--baseline FILE] [--out DIR]");
  if (p.help) return kExitPass;
  const std::string path = p.vm["results"].as<std::string>();
  const Results results = read_results(path);
  std::optional<Baseline> baseline;
  if (p.vm.count("baseline")) {
    baseline = read_baseline(p.vm["baseline"].as<std::string>());
    require_same_suite(results, *baseline, p.vm["baseline"].as<std::string>());
  }
  const GateReport gate = apply_gate(results, baseline ? &*baseline : nullptr);
  std::string dir = p.vm.count("out") ? p.vm["out"].as<std::string>() : fs::path(path).parent_path().string();
  if (dir.empty()) dir = ".";
  const OutputFolder folder(dir, p.vm.count("out") ? "--out" : "the folder of RESULTS");
  for (const std::string& w : write_reports(dir, ReportInput{results, baseline ? &*baseline : nullptr, gate}, all_reporters()))
    std::cout << "wrote " << w << "\n";
  return kExitPass;
}

int accept_command(const Args& args) {
  po::options_description opt("accept options");
  opt.add_options()("results", po::value<std::string>()->required(), "results.json of a whole suite")
      ("baseline", po::value<std::string>(), "baseline to write (default references/SUITE.baseline.json)")
      ("record", po::value<std::string>(), "verification record to extend (default reports/SUITE.md)");
  po::positional_options_description pos;
  pos.add("results", 1);
  const Parsed p = parse_options(args, opt, pos, "stepgate accept RESULTS [--baseline FILE] [--record FILE]");
  if (p.help) return kExitPass;
  const std::string path = p.vm["results"].as<std::string>();
  const Results results = read_results(path);
  if (!results.shard.empty())
    throw InputError(path, fmt::format("these are the results of shard {}; merge all shards first (stepgate merge)", results.shard));
  for (std::size_t i = 0; i < results.cases.size(); ++i) {
    const CaseResult& c = results.cases[i];
    if (!c.error.empty())
      throw InputError(path, fmt::format("case {} could not be run ({}); a baseline needs every case", c.id, c.error));
    // A verified case holds what its probes proved (the edge within a tolerance of the old
    // baseline), not a located safe range: accepting it would let the baseline drift.
    if (c.verification && c.verification->verified)
      throw InputError(fmt::format("{}#/cases/{}/verification", path, i),
                       fmt::format("case {} was verified against a baseline, not searched; expected the results of a "
                                   "full search (run the suite again with --full, or without --baseline)", c.id));
  }
  const std::string name = results.suite.name;
  if (!p.vm.count("baseline") || !p.vm.count("record"))  // the default paths are made from the name
    if (name.empty() || name == "." || name == ".." || name.find('/') != std::string::npos || name.find('\0') != std::string::npos)
      throw InputError(path + "#/suite/name", fmt::format("found the suite name '{}', which cannot name a file; expected "
                                                          "a name without '/' (or give --baseline and --record)", name));
  const std::string baseline_path = p.vm.count("baseline") ? p.vm["baseline"].as<std::string>() : "references/" + name + ".baseline.json";
  const std::string record_path = p.vm.count("record") ? p.vm["record"].as<std::string>() : "reports/" + name + ".md";
  // Both outputs are checked, and their folders locked, before either is written; then they
  // are committed together (a failure leaves both as they were).
  const std::string baseline_target = output_target(baseline_path, "--baseline");
  const std::string record_target = output_target(record_path, "--record");
  const auto same = [](const std::string& a, const std::string& b) {
    return fs::weakly_canonical(fs::absolute(a).lexically_normal()) == fs::weakly_canonical(fs::absolute(b).lexically_normal());
  };
  if (same(baseline_target, record_target))
    throw InputError("--record " + record_path, "is the same file as the baseline; expected two different files");
  for (const auto& [target, option] : {std::pair{baseline_target, "--baseline"}, std::pair{record_target, "--record"}})
    if (same(target, path))
      throw InputError(std::string(option) + " " + target, fmt::format("is the results file being accepted ({}); "
                                                                       "expected another file", path));
  std::vector<OutputFolder> folders;
  for (const std::string& file : {baseline_target, record_target}) {
    const std::string folder = fs::path(file).parent_path().empty() ? "." : fs::path(file).parent_path().string();
    bool held = false;
    for (const OutputFolder& f : folders) held = held || same(f.path(), folder);
    if (!held) folders.emplace_back(folder, file == record_target ? "--record" : "--baseline");
  }
  const Baseline baseline = baseline_from_results(results, utc_now());
  std::string existing;
  if (::access(record_target.c_str(), F_OK) == 0) existing = read_input_file(record_target, ReadAs::previous_output);
  OutputSet outputs(folders.front().path());
  outputs.stage(baseline_path, json_file_text(to_json(baseline)));
  outputs.stage(record_path, append_record(existing, name, render_record_entry(results, baseline)));
  outputs.commit();
  std::cout << fmt::format("accepted {} cases of suite '{}'\n  baseline: {}\n  record:   {}\n", baseline.cases.size(), name,
                           baseline_path, record_path);
  return kExitPass;
}

int merge_command(const Args& args) {
  po::options_description opt("merge options");
  opt.add_options()("results", po::value<std::vector<std::string>>()->required()->multitoken(), "shard results.json files")
      ("out", po::value<std::string>()->required(), "output folder for the merged results.json");
  po::positional_options_description pos;
  pos.add("results", -1);
  const Parsed p = parse_options(args, opt, pos, "stepgate merge RESULTS... --out DIR");
  if (p.help) return kExitPass;
  const auto paths = p.vm["results"].as<std::vector<std::string>>();
  std::vector<Results> shards;
  for (const std::string& path : paths) shards.push_back(read_results(path));
  const Results merged = merge_shards(std::move(shards), paths);
  const std::string dir = p.vm["out"].as<std::string>();
  for (const std::string& input : paths)
    if (fs::weakly_canonical(fs::path(dir) / "results.json") == fs::weakly_canonical(input))
      throw InputError("--out " + dir, fmt::format("would overwrite the input shard {}; expected another folder", input));
  const OutputFolder folder(dir, "--out");
  // As `run` writes them: results.json and the reports, committed together.
  const GateReport gate = apply_gate(merged, nullptr);
  const std::string out = (fs::path(dir) / "results.json").string();
  OutputSet outputs(dir);
  outputs.stage(out, json_file_text(to_json(merged)));
  const std::vector<std::string> reports = stage_reports(outputs, dir, ReportInput{merged, nullptr, gate}, all_reporters());
  outputs.commit();
  std::cout << fmt::format("merged {} shards ({} cases) into {}\nreports: {}\n", paths.size(), merged.cases.size(), out,
                           fmt::join(reports, ", "));
  return kExitPass;
}

}  // namespace stepgate::cli
