// Shows a piece of user input inside a message: quoted, control bytes escaped, and cut
// to a readable length, so that a binary or huge cell cannot swamp the message.
#pragma once
#include <cctype>
#include <cstdio>
#include <optional>
#include <string>
#include <string_view>

namespace stepgate {

/// 'text' with non-printable bytes as \xNN and at most `limit` bytes shown ("..." after).
inline std::string quote_text(std::string_view text, std::size_t limit = 40) {
  std::string out = "'";
  for (std::size_t i = 0; i < text.size() && i < limit; ++i) {
    const unsigned char c = static_cast<unsigned char>(text[i]);
    if (c >= 0x20 && c < 0x7f) {
      out += static_cast<char>(c);
    } else {
      char escaped[5];
      std::snprintf(escaped, sizeof escaped, "\\x%02x", c);
      out += escaped;
    }
  }
  out += text.size() > limit ? "'..." : "'";
  return out;
}

/// True for a control byte (below 0x20, or DEL) other than those listed in `keep`.
inline bool is_control_byte(char ch, std::string_view keep = {}) {
  const unsigned char c = static_cast<unsigned char>(ch);
  return (c < 0x20 || c == 0x7f) && keep.find(ch) == std::string_view::npos;
}

/// Appends ch, or "\xNN" for a control byte not in `keep`: visible text that can neither cut a
/// message short (NUL) nor drive a terminal (ESC, CR) nor break an output format.
inline void append_visible(std::string& out, char ch, std::string_view keep = {}) {
  if (!is_control_byte(ch, keep)) {
    out += ch;
    return;
  }
  char escaped[5];
  std::snprintf(escaped, sizeof escaped, "\\x%02x", static_cast<unsigned char>(ch));
  out += escaped;
}

/// `text` on one line: every control byte, line breaks included, as visible \xNN (a path or
/// name inside a message cannot start a line of its own).
inline std::string visible_line(std::string_view text) {
  std::string out;
  for (char ch : text) append_visible(out, ch);
  return out;
}

/// `text` as one word for a POSIX shell: unchanged when it holds only characters no shell reads
/// as syntax, else in single quotes (a quote inside as '\''), so that pasting it runs nothing.
/// nullopt when it holds a control byte (it cannot be shown pasteable on a terminal).
inline std::optional<std::string> shell_word(std::string_view text) {
  bool plain = !text.empty();
  for (char ch : text) {
    if (is_control_byte(ch)) return std::nullopt;
    const unsigned char c = static_cast<unsigned char>(ch);
    plain = plain && (std::isalnum(c) || std::string_view("_./:=@%+,-").find(ch) != std::string_view::npos);
  }
  if (plain) return std::string(text);
  std::string out = "'";
  for (char ch : text) out += ch == '\'' ? std::string("'\\''") : std::string(1, ch);
  return out + "'";
}

}  // namespace stepgate
