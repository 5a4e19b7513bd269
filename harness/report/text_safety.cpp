#include "stepgate/report/text_safety.hpp"

#include <string_view>

#include "stepgate/core/quote_text.hpp"

namespace stepgate {

namespace {

// The length of the valid UTF-8 sequence at s[i], or 0 when there is none.
std::size_t utf8_length(std::string_view s, std::size_t i) {
  const auto b = [&](std::size_t k) { return static_cast<unsigned char>(s[k]); };
  const unsigned char c = b(i);
  if (c < 0x80) return 1;
  std::size_t n = c >= 0xF0 ? 4 : c >= 0xE0 ? 3 : c >= 0xC2 ? 2 : 0;
  if (n == 0 || c > 0xF4 || i + n > s.size()) return 0;
  for (std::size_t k = 1; k < n; ++k)
    if ((b(i + k) & 0xC0) != 0x80) return 0;
  const unsigned char d = b(i + 1);
  if (c == 0xE0 && d < 0xA0) return 0;  // overlong
  if (c == 0xED && d > 0x9F) return 0;  // surrogates
  if (c == 0xF0 && d < 0x90) return 0;  // overlong
  if (c == 0xF4 && d > 0x8F) return 0;  // above U+10FFFF
  return n;
}

}  // namespace

std::string valid_utf8(std::string_view s) {
  std::string out;
  out.reserve(s.size());
  for (std::size_t i = 0; i < s.size();) {
    const std::size_t n = utf8_length(s, i);
    if (n == 0) {
      out += "\xEF\xBF\xBD";
      ++i;
    } else {
      out.append(s.substr(i, n));
      i += n;
    }
  }
  return out;
}

std::string markdown_text(std::string_view raw) {
  const std::string s = valid_utf8(raw);
  static constexpr std::string_view kSyntax = "\\`*_[]~|";
  std::string out;
  out.reserve(s.size() + s.size() / 8);
  for (std::size_t i = 0; i < s.size(); ++i) {
    const char c = s[i];
    if (c == '\r' && i + 1 < s.size() && s[i + 1] == '\n') continue;
    if (c == '\n' || c == '\r') out += ' ';
    else if (c == '&') out += "&amp;";
    else if (c == '<') out += "&lt;";
    else if (c == '>') out += "&gt;";
    else if (kSyntax.find(c) != std::string_view::npos) out += '\\', out += c;
    else append_visible(out, c);
  }
  return out;
}

}  // namespace stepgate
