#include "stepgate/core/visible_output.hpp"

#include <string>

#include "stepgate/core/quote_text.hpp"

namespace stepgate {

namespace {
constexpr std::string_view kKept = "\n\t";
}

VisibleBuf::int_type VisibleBuf::overflow(int_type c) {
  if (traits_type::eq_int_type(c, traits_type::eof())) return traits_type::not_eof(c);
  const char ch = traits_type::to_char_type(c);
  return xsputn(&ch, 1) == 1 ? c : traits_type::eof();
}

std::streamsize VisibleBuf::xsputn(const char* s, std::streamsize n) {
  std::streamsize start = 0;
  for (std::streamsize i = 0; i < n; ++i) {
    if (!is_control_byte(s[i], kKept)) continue;
    if (i > start && dest_->sputn(s + start, i - start) != i - start) return start;
    std::string shown;
    append_visible(shown, s[i], kKept);
    if (dest_->sputn(shown.data(), static_cast<std::streamsize>(shown.size())) !=
        static_cast<std::streamsize>(shown.size()))
      return i;
    start = i + 1;
  }
  if (n > start && dest_->sputn(s + start, n - start) != n - start) return start;
  return n;
}

VisibleOutput::VisibleOutput()
    : out_(std::cout.rdbuf()), err_(std::cerr.rdbuf()), old_out_(std::cout.rdbuf(&out_)),
      old_err_(std::cerr.rdbuf(&err_)) {}

VisibleOutput::~VisibleOutput() {
  std::cout.flush();
  std::cerr.flush();
  std::cout.rdbuf(old_out_);
  std::cerr.rdbuf(old_err_);
}

}  // namespace stepgate
