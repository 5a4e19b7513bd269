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

/// While one lives, the files read are remembered as the inputs of one command (a CLI command,
/// one run_suite call); when the outermost one ends they are forgotten, so that a program doing
/// many things in turn (a test, a user's tool on the library) may write what it read earlier.
/// Outside every scope nothing is remembered. Nests; not per thread (one command at a time).
class CommandInputs {
 public:
  CommandInputs();
  ~CommandInputs();
  CommandInputs(const CommandInputs&) = delete;
  CommandInputs& operator=(const CommandInputs&) = delete;
};

/// Within a CommandInputs scope: remembers `path` (after following symlinks: its device and
/// inode) as a file this command reads, so that no output is ever written onto it
/// (output_target refuses). Every reader of a user's file calls it; a missing path is ignored.
/// Thread-safe.
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
