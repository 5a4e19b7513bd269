// IDX files (LeCun, Cortes & Burges, "The MNIST database of handwritten digits": a 4-byte
// magic 00 00 TYPE NDIM, NDIM big-endian 32-bit dimensions, then the values row-major).
// Only unsigned-byte arrays (TYPE 0x08) are read: images 0x00000803 (count x rows x cols) and
// labels 0x00000801 (count). Files may be gzip-compressed (names ending in .gz) or plain.
// Errors are InputError with `where` = "path:byte N" (0-based offset into the decompressed
// content), since a binary file has no lines.
#pragma once
#include <cstdint>
#include <string>
#include <vector>

#include "stepgate/core/dataset.hpp"

namespace stepgate {

/// An unsigned-byte IDX array: dimensions and the values in row-major order.
struct IdxArray {
  std::vector<std::uint32_t> dims;
  std::string bytes;      ///< the whole file as read (kept, not copied: images are large)
  std::size_t first = 0;  ///< where the values start in `bytes` (after the header)
  /// The values, row-major, product(dims) of them.
  const std::uint8_t* values() const { return reinterpret_cast<const std::uint8_t*>(bytes.data()) + first; }
};

/// Reads an unsigned-byte IDX array whose magic must be 0x0000 08 `expected_dims`.
/// Errors: wrong magic, truncated header or data, bytes after the data. max_items > 0 reads
/// only the header and the first max_items items (along the first dimension; `dims` still
/// says the file's count): the rest is never read or decompressed, nor checked.
IdxArray read_idx(const std::string& path, int expected_dims, long max_items = 0);

/// Images and labels as a Dataset: X(i, r*cols + c) = pixel(i, r, c) * pixel_scale (default
/// 1/255 maps bytes to [0, 1]), y(i) = label (a class id 0..255). max_rows > 0 keeps the first
/// max_rows samples (0 = all), reading no further into either file. Features are named "px_R_C" (0-based row, column), the target
/// "label". sha256 = SHA-256 of the images file's stored bytes followed by the labels file's.
/// Errors: as read_idx, image and label counts that differ, max_rows < 0.
Dataset load_idx_dataset(const std::string& images_path, const std::string& labels_path,
                         std::string name, double pixel_scale = 1.0 / 255.0, long max_rows = 0);

}  // namespace stepgate
