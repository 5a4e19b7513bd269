// Fuzz target: the IDX reader (read_idx) and the images+labels Dataset (load_idx_dataset), plain
// and gzip-compressed (read_text_file's zlib path). Input: one byte of mode, then:
//   bits 0-1  0: images (3-D)  1: labels (1-D)  2: a 0..3-D array, the next byte says which
//             3: both; the next two bytes (big-endian) are the length of the images part,
//                the labels part is the rest
//   bit 2     the file(s) are named *.gz, so their bytes are read as gzip
//   bits 3-5  max_rows (0 = all)        bits 6-7  pixel scale 1/255, 1, 0, -0.5
#include <cstddef>
#include <cstdint>
#include <string>
#include <string_view>

#include "fuzz_support.hpp"
#include "stepgate/data/idx.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  using namespace stepgate;
  if (size == 0) return 0;
  const std::uint8_t flags = data[0];
  std::string_view rest(reinterpret_cast<const char*>(data + 1), size - 1);
  const std::string suffix = (flags & 4) ? ".idx.gz" : ".idx";
  const long max_rows = (flags >> 3) & 7;
  const double scales[] = {1.0 / 255.0, 1.0, 0.0, -0.5};
  const double scale = scales[flags >> 6];

  fuzz::expect_input_errors("fuzz_idx", [&] {
    switch (flags & 3) {
      case 0: (void)read_idx(fuzz::scratch_file("a" + suffix, rest), 3); break;
      case 1: (void)read_idx(fuzz::scratch_file("a" + suffix, rest), 1); break;
      case 2: {
        if (rest.empty()) return;
        const int dims = static_cast<unsigned char>(rest[0]) & 3;
        (void)read_idx(fuzz::scratch_file("a" + suffix, rest.substr(1)), dims);
        break;
      }
      default: {
        if (rest.size() < 2) return;
        const std::size_t n = (static_cast<unsigned char>(rest[0]) << 8) | static_cast<unsigned char>(rest[1]);
        rest.remove_prefix(2);
        const std::string_view images = rest.substr(0, n), labels = rest.substr(std::min(n, rest.size()));
        const std::string ip = fuzz::scratch_file("images" + suffix, images);
        const std::string lp = fuzz::scratch_file("labels" + suffix, labels);
        (void)load_idx_dataset(ip, lp, "fuzz", scale, max_rows);
      }
    }
  });
  return 0;
}
