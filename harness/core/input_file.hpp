// Reading a user's file whole, with the checks every reader needs: a folder, a device or a
// socket is refused by name ("is a directory", "is a character device") rather than read until
// memory runs out; a pipe (`<(cat suite.json)`) is read up to a cap.
#pragma once
#include <cstddef>
#include <string>

namespace stepgate {

/// Most bytes read from a pipe or fifo (1 GiB); regular files are read whole.
inline constexpr std::size_t kMaxPipeBytes = std::size_t{1} << 30;

/// Whether a read makes the file one of the command's inputs (see remember_input). A file
/// read only to be replaced by its next version (the verification record being extended, the
/// journal being resumed) is a `previous_output`.
enum class ReadAs { input, previous_output };

/// The file's bytes exactly as stored. Throws InputError(path, ...) when it is missing,
/// unreadable, not a regular file (a fifo is allowed), or a pipe longer than kMaxPipeBytes.
std::string read_input_file(const std::string& path, ReadAs as = ReadAs::input);

/// Remembers `path` (after following symlinks: its device and inode) as a file this process
/// reads, so that no output is ever written onto it (output_target refuses). Every reader of a
/// user's file calls it; a missing path is ignored. Thread-safe.
void remember_input(const std::string& path);

/// The path under which this process read the file with device `dev` and inode `ino`, or ""
/// when it read no such file (or that path no longer names it: an inode reused after a delete
/// is not mistaken for the input).
std::string input_path_of(unsigned long dev, unsigned long ino);

/// What a file of this type (st_mode) is, as messages say it: "a directory", "a fifo", ...
std::string file_kind(unsigned mode);

/// The same checks without reading: InputError(path, ...) unless `path` names a readable
/// regular file or a fifo. Used before a reader that opens the file itself (gzip).
/// Remembers the file as an input (remember_input).
void check_input_file(const std::string& path);

}  // namespace stepgate
