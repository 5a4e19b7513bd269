// Writing outputs so that nothing is lost (docs/design.md, "Outputs as a unit"):
//  - an output path may be missing or a regular file; a symlink is written through to its
//    target (the link stays a link); a directory, device, fifo or socket is refused (exit 2);
//  - an output folder is checked and locked before any work starts, so an unusable --out or a
//    second run on the same folder fails at once, not after the sweep;
//  - the files of one command are staged beside their targets, flushed, and committed together:
//    a manifest is written (the commit point), then each staged file is renamed over its target.
//    A kill between renames is finished by the next command that locks the folder or reads a
//    file of the set (roll forward); a set spread over several folders (accept: baseline and
//    record) leaves a copy of the manifest in each;
//    a failure before the commit point (full disk) removes the staged files and leaves the old
//    set untouched.
#pragma once
#include <string>
#include <utility>
#include <vector>

namespace stepgate {

/// The file to write for the output `path`: `path` itself, or the final target of its symlinks
/// (relative links resolved against the link's folder). Throws InputError(where, ...) when the
/// path, or what it links to, exists and is not a regular file, when a link loop is found, or
/// when the parent exists and is not a folder. `where` names the option ("--record") or "".
std::string output_target(const std::string& path, const std::string& where = "");

/// Files written together. Stage each file, then commit(): either every target gets its new
/// content or (on an error before the commit point) none changes. Not thread-safe.
class OutputSet {
 public:
  /// `manifest_dir`: the folder holding the commit manifest (".stepgate-commit"); it must be
  /// the folder an OutputFolder locks when the set is written under a lock, so that the next
  /// lock finishes an interrupted commit.
  explicit OutputSet(std::string manifest_dir);
  OutputSet(const OutputSet&) = delete;
  OutputSet& operator=(const OutputSet&) = delete;
  ~OutputSet();  ///< removes files staged but not committed

  /// Writes `text` to a staged file beside `path`'s target and flushes it to disk (fsync).
  /// Creates missing parent folders. ToolError on I/O (the set then commits nothing).
  void stage(const std::string& path, const std::string& text);
  /// Commits every staged file; returns the paths as given to stage(). ToolError on I/O.
  std::vector<std::string> commit();

 private:
  std::string manifest_dir_;
  std::vector<std::pair<std::string, std::string>> staged_;  // (staged file, target)
  std::vector<std::string> paths_;
  bool committed_ = false;
};

/// Finishes a commit that was interrupted between its renames (the manifest in `dir` names
/// them), then removes stale staged and temporary files of earlier stepgate processes.
/// Call only while holding the folder's lock (OutputFolder does).
void recover_output_folder(const std::string& dir);

/// An output folder, created if missing, checked writable and locked for this process
/// (flock on the folder itself: no lock file is left behind). Throws InputError(where, ...)
/// when the folder cannot be created or written, is not a folder, or another stepgate process
/// holds it. The lock is released when the object is destroyed (or the process dies); a folder
/// it created is removed then if it is still empty.
class OutputFolder {
 public:
  OutputFolder(const std::string& dir, const std::string& where);
  OutputFolder(const OutputFolder&) = delete;
  OutputFolder& operator=(const OutputFolder&) = delete;
  OutputFolder(OutputFolder&& other) noexcept;
  OutputFolder& operator=(OutputFolder&& other) noexcept;
  ~OutputFolder();
  const std::string& path() const { return dir_; }

 private:
  std::string dir_;
  int fd_ = -1;
  bool created_ = false;  ///< made by this object: removed again if it is still empty
};

/// Before reading `path` (results, a baseline): when its folder, or the folder of its target,
/// holds the manifest of a commit interrupted between its renames, finishes that commit under
/// the folder's lock, so that no reader ever sees a mixed set (new results beside old reports,
/// a new baseline beside an old record). Waits up to 5 s for a writer that is committing now.
/// InputError(path, ...) when the commit cannot be finished (a read-only folder, a writer that
/// does not finish).
void finish_interrupted_commit(const std::string& path);

/// Writes one file on its own: stage, then commit (what write_text_atomically does).
void write_file_committed(const std::string& path, const std::string& text);

}  // namespace stepgate
