// stepgate: verifies learning rates. Thin glue: picks the subcommand, maps errors to exit codes.
#include <fmt/format.h>

#include <cstdio>
#include <iostream>
#include <string>
#include <vector>

#include "cli/commands.hpp"
#include "core/error.hpp"

namespace {

constexpr const char* kUsage = R"(usage: stepgate <command> [options]

commands:
  run SUITE [--out DIR] [--jobs N] [--shard K/N] [--quiet]
                        run the suite's cases, write DIR/results.json, print the safe ranges
  validate SUITE        parse and check a suite file only
  plan SUITE            list the cases and runs a suite expands to

  stepgate <command> --help   options of one command
  stepgate --version

exit codes: 0 pass, 1 verdict fail, 2 bad input or usage, 3 failure of the tool itself)";

}  // namespace

int main(int argc, char** argv) {
  using namespace stepgate;
  const std::vector<std::string> all(argv + 1, argv + argc);
  if (all.empty()) {
    std::cerr << kUsage << "\n";
    return kExitBadInput;
  }
  const std::string command = all.front();
  const cli::Args args(all.begin() + 1, all.end());
  try {
    if (command == "--help" || command == "-h" || command == "help") {
      std::cout << kUsage << "\n";
      return kExitPass;
    }
    if (command == "--version") {
      std::cout << "stepgate " << STEPGATE_VERSION << "\n";
      return kExitPass;
    }
    if (command == "run") return cli::run_command(args);
    if (command == "validate") return cli::validate_command(args);
    if (command == "plan") return cli::plan_command(args);
    throw InputError("command line", fmt::format("unknown command '{}'\n{}", command, kUsage));
  } catch (const InputError& e) {
    std::cerr << "stepgate: error: " << e.what() << "\n";
    return kExitBadInput;
  } catch (const ToolError& e) {
    std::cerr << "stepgate: failure: " << e.what() << "\n";
    return kExitToolFailure;
  } catch (const std::exception& e) {
    std::cerr << "stepgate: failure: " << e.what() << "\n";
    return kExitToolFailure;
  }
}
