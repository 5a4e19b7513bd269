// SHA-256 (FIPS 180-4) of bytes and of files, as lower-case hex: the data hash recorded in
// results (Dataset::sha256) and compared by the gate.
#pragma once
#include <string>
#include <vector>
#include <string_view>

namespace stepgate {

/// 64 lower-case hex digits of the SHA-256 of `bytes`.
std::string sha256_hex(std::string_view bytes);

/// SHA-256 of the file's raw bytes, read in 64 KiB blocks (a .gz file is hashed as stored,
/// not decompressed). Throws InputError(path, ...) when the file cannot be opened or read.
std::string sha256_file(const std::string& path);

/// The SHA-256 of the files' bytes one after the other (as of their concatenation), read in
/// blocks: no file is held in memory whole. InputError(path, ...) if one cannot be read.
std::string sha256_files(const std::vector<std::string>& paths);

}  // namespace stepgate
