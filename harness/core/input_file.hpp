// Reading a user's file whole, with the checks every reader needs: a folder, a device or a
// socket is refused by name ("is a directory", "is a character device") rather than read until
// memory runs out; a pipe (`<(cat suite.json)`) is read up to a cap.
#pragma once
#include <cstddef>
#include <string>

namespace stepgate {

/// Most bytes read from a pipe or fifo (1 GiB); regular files are read whole.
inline constexpr std::size_t kMaxPipeBytes = std::size_t{1} << 30;

/// The file's bytes exactly as stored. Throws InputError(path, ...) when it is missing,
/// unreadable, not a regular file (a fifo is allowed), or a pipe longer than kMaxPipeBytes.
std::string read_input_file(const std::string& path);

/// What a file of this type (st_mode) is, as messages say it: "a directory", "a fifo", ...
std::string file_kind(unsigned mode);

/// The same checks without reading: InputError(path, ...) unless `path` names a readable
/// regular file or a fifo. Used before a reader that opens the file itself (gzip).
void check_input_file(const std::string& path);

}  // namespace stepgate
