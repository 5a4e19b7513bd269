#include "stepgate/report/html_escape.hpp"

#include "stepgate/core/quote_text.hpp"
#include "stepgate/report/text_safety.hpp"

namespace stepgate {

std::string html_escape(std::string_view raw) {
  const std::string s = valid_utf8(raw);  // a program's output may hold any bytes
  std::string out;
  out.reserve(s.size() + s.size() / 8);
  for (char c : s) {
    switch (c) {
      case '&': out += "&amp;"; break;
      case '<': out += "&lt;"; break;
      case '>': out += "&gt;"; break;
      case '"': out += "&quot;"; break;
      case '\'': out += "&#39;"; break;
      default: append_visible(out, c, "\t\n");  // a control byte as visible \xNN
    }
  }
  return out;
}

}  // namespace stepgate
