// Shows a piece of user input inside a message: quoted, control bytes escaped, and cut
// to a readable length, so that a binary or huge cell cannot swamp the message.
#pragma once
#include <cstdio>
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

/// A message for the terminal: control bytes other than line feed and tab (NUL, ESC, CR,
/// DEL, ...) shown as \xNN, so that text from a file can neither cut the message short nor
/// drive the terminal. UTF-8 text passes unchanged.
inline std::string terminal_text(std::string_view text) {
  std::string out;
  out.reserve(text.size());
  for (const char ch : text) {
    const unsigned char c = static_cast<unsigned char>(ch);
    if (c >= 0x20 && c != 0x7f) {
      out += ch;
    } else if (c == '\n' || c == '\t') {
      out += ch;
    } else {
      char escaped[5];
      std::snprintf(escaped, sizeof escaped, "\\x%02x", c);
      out += escaped;
    }
  }
  return out;
}

}  // namespace stepgate
