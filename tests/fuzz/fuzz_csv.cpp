// Fuzz target: the CSV reader (parse_csv) and the conversion of its table into a Dataset.
// Input: one byte of options, then the CSV text.
//   bits 0-1  delimiter  , ; TAB |        bit 2  whitespace-delimited
//   bit 3     header row                   bits 4-5  quote  " ' none "
//   bit 6     without header: column names a, b, c given
//   bit 7     through a file (read_csv) instead of from memory
#include <cstddef>
#include <cstdint>
#include <string>
#include <string_view>

#include "fuzz_support.hpp"
#include "stepgate/data/csv.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  using namespace stepgate;
  if (size == 0) return 0;
  const std::uint8_t flags = data[0];
  const std::string_view text(reinterpret_cast<const char*>(data + 1), size - 1);
  CsvOptions o;
  o.delimiter = ",;\t|"[flags & 3];
  o.whitespace_delimited = (flags & 4) != 0;
  o.header = (flags & 8) != 0;
  o.quote = std::string_view("\"'\0\"", 4)[(flags >> 4) & 3];
  if (!o.header && (flags & 64)) o.column_names = {"a", "b", "c"};

  fuzz::expect_input_errors("fuzz_csv", [&] {
    const CsvTable table = (flags & 128) ? read_csv(fuzz::scratch_file("input.csv", text), o)
                                         : parse_csv(text, "input.csv", o);
    for (std::size_t r = 0; r < table.rows.size() && r < 4; ++r)
      for (std::size_t c = 0; c < table.header.size(); ++c) (void)table.cell_location(r, c);
    if (table.header.empty()) return;
    // The default (every other column a feature), then an explicit list that may name the
    // target or repeat a column: both are paths a suite's "features" can take.
    const std::string& target = table.header.back();
    fuzz::expect_input_errors("fuzz_csv", [&] { (void)table_to_dataset(table, target, {}, "fuzz"); });
    (void)table_to_dataset(table, target, {table.header.front(), table.header[table.header.size() / 2]}, "fuzz");
  });
  return 0;
}
