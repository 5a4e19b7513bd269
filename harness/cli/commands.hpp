// The subcommands. Each takes its arguments (after the subcommand word) and returns the exit
// code; errors of input are thrown as InputError (exit 2), failures of the tool as ToolError (3).
#pragma once
#include <string>
#include <vector>

namespace stepgate::cli {

using Args = std::vector<std::string>;

int run_command(const Args& args);
int validate_command(const Args& args);
int plan_command(const Args& args);
int check_command(const Args& args);
int report_command(const Args& args);
int accept_command(const Args& args);
int merge_command(const Args& args);

/// Parses "K/N" (1 <= K <= N <= kMaxShards) or "slurm" (K and N from the job array's
/// environment); InputError otherwise.
std::pair<int, int> parse_shard(const std::string& text);

}  // namespace stepgate::cli
