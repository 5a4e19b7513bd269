// Fuzz target: a suite document through what `stepgate validate` does (parse, check, expand into
// cases). parse_suite is load_suite without the file read. The document is placed in
// tests/data/suites/ so that relative data and reference paths of the seeds (data/tiny.csv, ...)
// resolve to real files and the checks behind them run too.
#include <cstddef>
#include <cstdint>
#include <string>

#include "fuzz_support.hpp"
#include "stepgate/core/trainer_fields.hpp"
#include "stepgate/suite/suite.hpp"
#include "stepgate/sweep/plan.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  static const std::string path = STEPGATE_SOURCE_DIR "/tests/data/suites/fuzz-input.json";
  const std::string text(reinterpret_cast<const char*>(data), size);
  stepgate::fuzz::expect_input_errors("fuzz_suite", [&] {
    const stepgate::Suite suite = stepgate::parse_suite(text, path);
    const stepgate::Plan plan = stepgate::make_plan(suite);
    (void)plan.max_runs();
    (void)plan.max_iterations();
    for (const auto& [name, spec] : suite.optimizers) (void)stepgate::trainer_placeholders(spec);
  });
  return 0;
}
