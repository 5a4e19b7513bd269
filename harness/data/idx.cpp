#include "stepgate/data/idx.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>

#include "stepgate/core/error.hpp"
#include "stepgate/data/file_io.hpp"
#include "stepgate/data/sha256.hpp"

namespace stepgate {
namespace {

std::string at_byte(const std::string& path, std::size_t offset) {
  return path + ":byte " + std::to_string(offset);
}

std::uint32_t big_endian_u32(const std::string& bytes, std::size_t offset) {
  std::uint32_t v = 0;
  for (std::size_t k = 0; k < 4; ++k) v = (v << 8) | static_cast<unsigned char>(bytes[offset + k]);
  return v;
}

std::string hex32(std::uint32_t v) {
  char text[11];
  std::snprintf(text, sizeof text, "0x%08x", v);
  return text;
}

}  // namespace

IdxArray read_idx(const std::string& path, int expected_dims, long max_items) {
  const std::size_t header_bytes = 4 + 4 * static_cast<std::size_t>(expected_dims);
  std::string bytes = max_items > 0 ? read_text_prefix(path, header_bytes) : read_text_file(path);
  const auto expected_magic = static_cast<std::uint32_t>(0x0800 | expected_dims);
  const std::string what = expected_dims == 1   ? "a 1-D unsigned-byte array (labels)"
                           : expected_dims == 3 ? "a 3-D unsigned-byte array (images)"
                                                : "an unsigned-byte IDX array";
  if (bytes.size() < 4)
    throw InputError(at_byte(path, bytes.size()),
                     "found the end of the file inside the 4-byte magic number; expected " +
                         hex32(expected_magic) + " for " + what);
  const std::uint32_t magic = big_endian_u32(bytes, 0);
  if (magic != expected_magic)
    throw InputError(at_byte(path, 0), "found magic number " + hex32(magic) + "; expected " +
                                           hex32(expected_magic) + " for " + what);
  const std::size_t header_size = 4 + 4 * static_cast<std::size_t>(expected_dims);
  if (bytes.size() < header_size)
    throw InputError(at_byte(path, bytes.size()),
                     "found the end of the file inside the dimensions; expected " +
                         std::to_string(expected_dims) + " big-endian 32-bit dimensions");
  IdxArray array;
  std::size_t count = 1;
  bool overflow = false;
  for (int k = 0; k < expected_dims; ++k) {
    const std::uint32_t dim = big_endian_u32(bytes, 4 + 4 * static_cast<std::size_t>(k));
    array.dims.push_back(dim);
    overflow = overflow || __builtin_mul_overflow(count, static_cast<std::size_t>(dim), &count);
  }
  if (max_items > 0 && !overflow && !array.dims.empty() && array.dims[0] > 0) {
    // Only the items wanted: the header's count stays, the values are the first max_items.
    // The file's size is checked without reading it: a plain file's from the file system, a
    // gzip file's from its trailer (mod 2^32).
    if (const auto stated = stated_content_size(path)) {
      const std::size_t whole = header_size + count;
      const bool gz = path.size() > 3 && path.compare(path.size() - 3, 3, ".gz") == 0;
      if (gz && (*stated & 0xffffffffu) != (whole & 0xffffffffu))
        throw InputError(path, "its gzip trailer gives the content as " + std::to_string(*stated) + " bytes; the "
                               "dimensions say " + std::to_string(whole) + " (a truncated or damaged gzip file?)");
      if (!gz && *stated < whole)
        throw InputError(at_byte(path, *stated), "found the end of the file after " +
                                                     std::to_string(*stated - std::min(*stated, header_size)) +
                                                     " data bytes; expected " + std::to_string(count) +
                                                     " as the dimensions say (truncated file?)");
      if (!gz && *stated > whole)
        throw InputError(at_byte(path, whole), "found " + std::to_string(*stated - whole) +
                                                   " bytes after the data; expected the file to end there");
    }
    const std::size_t item = count / array.dims[0];
    const std::size_t wanted = std::min<std::size_t>(array.dims[0], static_cast<std::size_t>(max_items));
    bytes = read_text_prefix(path, header_size + wanted * item);
    if (bytes.size() < header_size + wanted * item)
      throw InputError(at_byte(path, bytes.size()),
                       "found the end of the file after " + std::to_string(bytes.size() - header_size) +
                           " data bytes; expected at least " + std::to_string(wanted * item) + " for the first " +
                           std::to_string(wanted) + " items (truncated file?)");
    array.first = header_size;
    array.bytes = std::move(bytes);
    return array;
  }
  const std::size_t available = bytes.size() - header_size;
  if (overflow || count > available)
    throw InputError(at_byte(path, bytes.size()),
                     "found the end of the file after " + std::to_string(available) +
                         " data bytes; expected " +
                         (overflow ? std::string("more than 2^64") : std::to_string(count)) +
                         " as the dimensions say (truncated file?)");
  if (count < available)
    throw InputError(at_byte(path, header_size + count),
                     "found " + std::to_string(available - count) +
                         " bytes after the data; expected the file to end there");
  array.first = header_size;
  array.bytes = std::move(bytes);
  return array;
}

Dataset load_idx_dataset(const std::string& images_path, const std::string& labels_path,
                         std::string name, double pixel_scale, long max_rows) {
  if (max_rows < 0)
    throw InputError(images_path, "found max_rows = " + std::to_string(max_rows) +
                                      "; expected 0 (all rows) or a positive count");
  if (!std::isfinite(pixel_scale) || pixel_scale == 0.0)
    throw InputError(images_path, "found a pixel scale that is zero or not finite; expected a "
                                  "finite non-zero factor");
  const IdxArray images = read_idx(images_path, 3, max_rows);
  const IdxArray labels = read_idx(labels_path, 1, max_rows);
  if (images.dims[0] != labels.dims[0])
    throw InputError(at_byte(labels_path, 4),
                     "found " + std::to_string(labels.dims[0]) + " labels; expected " +
                         std::to_string(images.dims[0]) + ", one per image in " + images_path);
  if (images.dims[0] == 0 || images.dims[1] == 0 || images.dims[2] == 0)
    throw InputError(at_byte(images_path, 4),
                     "found " + std::to_string(images.dims[0]) + " images of " +
                         std::to_string(images.dims[1]) + " x " + std::to_string(images.dims[2]) +
                         " pixels; expected at least one image of at least one pixel");
  Index n = images.dims[0];
  if (max_rows > 0 && max_rows < n) n = max_rows;
  const Index height = images.dims[1], width = images.dims[2], d = height * width;

  Dataset data;
  data.name = std::move(name);
  data.X.resize(n, d);
  data.y.resize(n);
  for (Index i = 0; i < n; ++i) {
    const std::uint8_t* pixels = images.values() + i * d;
    for (Index j = 0; j < d; ++j) data.X(i, j) = pixels[j] * pixel_scale;
    data.y(i) = labels.values()[i];
  }
  data.features.reserve(static_cast<std::size_t>(d));
  for (Index r = 0; r < height; ++r)
    for (Index c = 0; c < width; ++c)
      data.features.push_back("px_" + std::to_string(r) + "_" + std::to_string(c));
  data.target = "label";
  data.target_file = labels_path;
  data.target_first_byte = 8;  // after the magic number and the one dimension
  data.map = FeatureMap::identity(d);
  data.sha256 = sha256_files({images_path, labels_path});  // streamed: neither file held again
  return data;
}

}  // namespace stepgate
