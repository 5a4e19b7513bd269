// Reading whole user files into memory, with transparent gzip decompression (zlib), so that
// data shipped compressed (sklearn's diabetes_data_raw.csv.gz, MNIST-style *.idx.gz) reads
// like any other file. Hashing the stored bytes is sha256_file's job (data/sha256.hpp).
#pragma once
#include <string>

namespace stepgate {

/// The file's bytes exactly as stored. Throws InputError(path, ...) if it cannot be read.
std::string read_raw_file(const std::string& path);

/// The decompressed content of a gzip file (gzopen/gzread). Throws InputError(path, ...) if
/// the file cannot be opened, is not gzip (no 1f 8b header), or the stream is corrupt or cut.
std::string read_gzip_file(const std::string& path);

/// The file's content: decompressed when the name ends in ".gz", else as stored. The result
/// holds bytes (text or binary) in a std::string.
std::string read_text_file(const std::string& path);

}  // namespace stepgate
