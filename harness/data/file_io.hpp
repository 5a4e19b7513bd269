// Reading whole user files into memory, with transparent gzip decompression (zlib), so that
// data shipped compressed (sklearn's diabetes_data_raw.csv.gz, MNIST-style *.idx.gz) reads
// like any other file. Hashing the stored bytes is sha256_file's job (data/sha256.hpp).
#pragma once
#include <cstddef>
#include <optional>
#include <string>

namespace stepgate {

/// The file's bytes exactly as stored. Throws InputError(path, ...) if it cannot be read.
std::string read_raw_file(const std::string& path);

/// The decompressed content of a gzip file (gzopen/gzread). Throws InputError(path, ...) if
/// the file cannot be opened, is not gzip (no 1f 8b header), or the stream is corrupt or cut.
std::string read_gzip_file(const std::string& path);

/// The file's content: decompressed when the name ends in ".gz", else as stored. The result
/// holds bytes (text or binary) in a std::string. Refused before it is read (InputError with
/// the size and the estimate) when its content is larger than max_read_bytes(): a gzip file by
/// the size its trailer states, and by what it expands to while it is read (a lying trailer).
std::string read_text_file(const std::string& path);

/// As read_text_file, but only up to the end of the `lines`-th line that holds more than
/// blanks, counting only line ends outside `quote`d fields ('\0': no quoting); all of it when
/// it has fewer. What follows is never read, so a data set's max_rows bounds memory and time.
std::string read_text_lines(const std::string& path, long lines, char quote);

/// As read_text_file, but only the first `bytes` bytes of the content (fewer when it is
/// shorter); what follows is never read or decompressed.
std::string read_text_prefix(const std::string& path, std::size_t bytes);

/// The content's size without reading it: a plain file's size, or what a gzip file's trailer
/// states (the size mod 2^32, as gzip keeps it). nullopt when it cannot be told.
std::optional<std::size_t> stated_content_size(const std::string& path);

/// Most bytes of one data file's content held in memory: the smaller of physical memory and
/// the process's address-space limit, divided by 9 (the text, its values parsed into doubles,
/// up to 4 times the text for values like "1,", and one scaled copy of those).
std::size_t max_read_bytes();

}  // namespace stepgate
