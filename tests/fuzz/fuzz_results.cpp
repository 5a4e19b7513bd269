// Fuzz target: the readers of saved results (results.json) and of the baseline, as `check`,
// `report`, `accept` and `merge` reach them: through the file, so that the JSON syntax error
// path (line:column from the byte offset) is covered too. What a reader accepts is written back
// with to_json, since `accept` and `merge` do exactly that with what they read.
#include <cstddef>
#include <cstdint>
#include <string>
#include <string_view>

#include "fuzz_support.hpp"
#include "stepgate/core/results.hpp"
#include "stepgate/gate/baseline.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  using namespace stepgate;
  const std::string path =
      fuzz::scratch_file("results.json", std::string_view(reinterpret_cast<const char*>(data), size));
  fuzz::expect_input_errors("fuzz_results", [&] {
    const Results r = read_results(path);
    (void)to_json(r);
  });
  fuzz::expect_input_errors("fuzz_results", [&] {
    const Baseline b = read_baseline(path);
    (void)to_json(b);
    for (const BaselineCase& c : b.cases) (void)b.find(c.id);
  });
  return 0;
}
