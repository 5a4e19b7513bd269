// Fuzz target: the trainer-output reader of command problems. The parser of a program's lines
// ({"iter": k, "cost": J}, {"params": [...]}, serving mode's {"run": id, ...} and {"run": id,
// "end": true}, Python's NaN/Infinity tokens) and the live classification behind it are private
// to run/command_runner.cpp, so this drives the narrowest public entry, run_commands, with a
// "training program" that prints the fuzz input: /bin/cat of a scratch file (per-run mode), or a
// shell that reads the request line first and then prints the file (serving mode; the single
// request of a session is run 1). Input: one byte of mode, then the program's stdout.
//   bit 0  serving mode              bit 1  J* known (optimum 0: the gap criterion)
//   bit 2  reference values exist (converged runs go on to their params line)
//   bit 3  budget 20 instead of 10000
// Each input costs a fork and exec, so expect hundreds of executions per second, not thousands.
#include <cstddef>
#include <cstdint>
#include <filesystem>
#include <string>
#include <string_view>
#include <vector>

#include "fuzz_support.hpp"
#include "stepgate/run/command_runner.hpp"

namespace {

// The runner keeps the {out} folder of a failed run under $TMPDIR for the user to inspect; here
// $TMPDIR is this process's scratch folder and the folders go after every input.
void remove_run_folders() {
  namespace fs = std::filesystem;
  std::error_code ec;
  for (const fs::directory_entry& e : fs::directory_iterator(stepgate::fuzz::scratch_folder(), ec))
    if (e.path().filename().string().starts_with("stepgate-run-")) fs::remove_all(e.path(), ec);
}

}  // namespace

extern "C" int LLVMFuzzerInitialize(int*, char***) {
  ::setenv("TMPDIR", stepgate::fuzz::scratch_folder().c_str(), 1);
  return 0;
}

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  using namespace stepgate;
  if (size == 0) return 0;
  const std::uint8_t flags = data[0];
  const std::string out = fuzz::scratch_file(
      "stdout.txt", std::string_view(reinterpret_cast<const char*>(data + 1), size - 1));

  CommandCase c;
  c.case_id = "fuzz/none/gd";
  c.optimizer.label = "gd";
  c.scaling = "none";
  c.spec.serve = (flags & 1) != 0;
  c.spec.argv = c.spec.serve ? std::vector<std::string>{"/bin/sh", "-c", "read -r request; exec cat \"$0\"", out}
                             : std::vector<std::string>{"/bin/cat", out};
  c.spec.optimum = (flags & 2) ? 0.0 : kMissing;
  c.wants_params = (flags & 4) != 0;
  c.spec.timeout = 10.0;
  c.spec.grace = 0.05;  // cat has nothing to clean up; a long grace only slows the fuzzer
  c.spec.max_output = 1L << 20;
  RunSettings settings;
  settings.budget = (flags & 8) ? 20 : 10000;
  settings.outcome.confirm_factor = kCommandConfirmFactor;
  settings.outcome.probe = false;  // no probe can run beside a user's program

  const double rates[] = {0.1};
  fuzz::expect_input_errors("fuzz_command", [&] {
    const std::vector<RunRecord> records = run_commands(c, settings, rates, BatchSeed{42, 0, 1}, 1);
    if (records.size() != 1) {
      std::fprintf(stderr, "fuzz_command: %zu records for one rate\n", records.size());
      std::abort();
    }
  });
  remove_run_folders();
  return 0;
}
