// Errors that reach the user. Their type decides the exit code (docs/design.md, Gate):
// InputError -> 2 (bad input or usage), ToolError -> 3 (run-time failure of the tool).
#pragma once
#include <stdexcept>
#include <string>

namespace stepgate {

/// Bad input: `where` names the file and the line/column or JSON pointer; `what()` says
/// what was found and what was expected.
class InputError : public std::runtime_error {
 public:
  InputError(std::string where, const std::string& message)
      : std::runtime_error(where.empty() ? message : where + ": " + message),
        where_(std::move(where)), message_(message) {}
  const std::string& where() const { return where_; }
  const std::string& message() const { return message_; }
  /// what() as a std::string: unlike what(), not cut short by a NUL inside a quoted value.
  std::string text() const { return where_.empty() ? message_ : where_ + ": " + message_; }

 private:
  std::string where_;
  std::string message_;
};

/// A failure of the tool itself (I/O, a program that cannot be started at all).
class ToolError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

inline constexpr int kExitPass = 0;
inline constexpr int kExitFail = 1;
inline constexpr int kExitBadInput = 2;
inline constexpr int kExitToolFailure = 3;
/// Stopped by Ctrl-C or SIGTERM (128 + SIGINT, as shells report it); the journal is kept.
inline constexpr int kExitInterrupted = 130;

}  // namespace stepgate
