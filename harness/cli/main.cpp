// stepgate: verifies learning rates. Thin glue: picks the subcommand, maps errors to exit codes.
#include <fmt/format.h>

#include <cstdio>
#include <iostream>
#include <new>
#include <string>
#include <vector>

#include "stepgate/cli/commands.hpp"
#include "stepgate/core/input_file.hpp"
#include "stepgate/core/quote_text.hpp"
#include "stepgate/core/visible_output.hpp"
#include "stepgate/core/error.hpp"

namespace {

constexpr const char* kUsage = R"(usage: stepgate <command> [options]

commands:
  run SUITE [--out DIR] [--jobs N] [--baseline FILE] [--shard K/N|slurm] [--resume] [--quiet]
                        run the suite's cases, write DIR/results.json, print the safe ranges;
                        with --baseline also the findings, the reports and the gate's exit code
  check RESULTS --baseline FILE
                        apply the gate rules; exit 0 pass, 1 fail
  report RESULTS [--baseline FILE] [--out DIR]
                        write report.md, report.html and junit.xml
  accept RESULTS [--baseline FILE] [--record FILE]
                        write the baseline and add to the verification record
  merge RESULTS... --out DIR
                        join the shards of one suite into one results.json
  validate SUITE        parse and check a suite file only
  plan SUITE            list the cases and runs a suite expands to

  stepgate <command> --help   options of one command
  stepgate --version

exit codes: 0 pass, 1 verdict fail, 2 bad input or usage, 3 failure of the tool itself,
            130 stopped by Ctrl-C (resume with run --resume))";

}  // namespace

int main(int argc, char** argv) {
  using namespace stepgate;
  const VisibleOutput visible;  // no raw control byte from a file reaches the terminal
  const std::vector<std::string> all(argv + 1, argv + argc);
  if (all.empty()) {
    std::cerr << kUsage << "\n";
    return kExitBadInput;
  }
  const std::string command = all.front();
  const cli::Args args(all.begin() + 1, all.end());
  try {
    const CommandInputs inputs;  // what the command reads is never overwritten by what it writes
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
    if (command == "check") return cli::check_command(args);
    if (command == "report") return cli::report_command(args);
    if (command == "accept") return cli::accept_command(args);
    if (command == "merge") return cli::merge_command(args);
    throw InputError("command line", fmt::format("unknown command '{}'\n{}", command, kUsage));
  } catch (const InputError& e) {
    // The place (a path, a name from a file) on one line: it cannot forge a line of its own.
    std::cerr << "stepgate: error: " << (e.where().empty() ? "" : visible_line(e.where()) + ": ") << e.message() << "\n";
    return kExitBadInput;
  } catch (const ToolError& e) {
    std::cerr << "stepgate: failure: " << e.what() << "\n";
    return kExitToolFailure;
  } catch (const std::bad_alloc&) {
    std::cerr << "stepgate: failure: out of memory: this command needed more memory than the machine or the "
                 "process's limits give (ulimit -v); `stepgate plan` shows what each case may run, and data sets "
                 "can be cut with max_rows\n";
    return kExitToolFailure;
  } catch (const std::exception& e) {
    std::cerr << "stepgate: failure: " << e.what() << "\n";
    return kExitToolFailure;
  }
}
