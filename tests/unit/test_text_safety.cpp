// Text made safe for where it goes: UTF-8 repaired, Markdown inert, a repeated JSON key found
// with its pointer (RFC 6901 escaping), a path quoted for a POSIX shell.
#include <catch2/catch.hpp>

#include "stepgate/core/json_text.hpp"
#include "stepgate/core/quote_text.hpp"
#include "stepgate/report/text_safety.hpp"

using namespace stepgate;

TEST_CASE("text safety: invalid UTF-8 becomes U+FFFD, valid UTF-8 passes unchanged", "[report]") {
  const std::string fffd = "\xEF\xBF\xBD";
  CHECK(valid_utf8("plain ascii") == "plain ascii");
  CHECK(valid_utf8("\xC3\xA9t\xC3\xA9 \xE2\x89\xA4 \xF0\x9F\x98\x80") == "\xC3\xA9t\xC3\xA9 \xE2\x89\xA4 \xF0\x9F\x98\x80");
  CHECK(valid_utf8("a\xFF" "b") == "a" + fffd + "b");
  CHECK(valid_utf8("\xC0\xAF") == fffd + fffd);                // an overlong '/'
  CHECK(valid_utf8("\xED\xA0\x80") == fffd + fffd + fffd);     // a surrogate (U+D800)
  CHECK(valid_utf8("\xF4\x90\x80\x80") == fffd + fffd + fffd + fffd);  // above U+10FFFF
  CHECK(valid_utf8("cut \xE2\x89") == "cut " + fffd + fffd);   // a sequence cut short
}

TEST_CASE("text safety: Markdown text renders as the characters it holds", "[report]") {
  CHECK(markdown_text("bowl-50/none/hb-0.9") == "bowl-50/none/hb-0.9");  // ids are left as they are
  CHECK(markdown_text("[x](http://e) *a* _b_ `c` <d> & | !#~\\") ==
        "\\[x\\](http://e) \\*a\\* \\_b\\_ \\`c\\` &lt;d&gt; &amp; \\| !#\\~\\\\");
  CHECK(markdown_text("two\r\nlines\nhere") == "two lines here");
  CHECK(markdown_text("esc \x1b[31m") == "esc \\x1b\\[31m");
  CHECK(markdown_text("bad \xFF") == "bad \xEF\xBF\xBD");
}

TEST_CASE("text safety: the first key given twice, with its JSON pointer", "[core]") {
  CHECK(first_repeated_key(R"({"a": 1, "b": {"c": 1, "d": 2}})").empty());
  CHECK(first_repeated_key(R"({"a": 1, "b": {"c": 1, "c": 2}})") == "/b/c");
  CHECK(first_repeated_key(R"([{"a": 1}, {"a": 1, "a": 2}])") == "/1/a");
  CHECK(first_repeated_key(R"({"x": [1, [2, {"k": 0, "k": 1}]]})") == "/x/1/1/k");
  CHECK(first_repeated_key(R"({"a/b~": 1, "a/b~": 2})") == "/a~1b~0");  // RFC 6901 escaping
  CHECK(first_repeated_key(R"({"a": {"k": 1}, "b": {"k": 1}})").empty());  // one key per object
  CHECK(first_repeated_key("not json").empty());                          // the parser reports that
}

TEST_CASE("text safety: a word for a POSIX shell runs nothing when pasted", "[core]") {
  CHECK(shell_word("suites/demo.json") == std::optional<std::string>("suites/demo.json"));
  CHECK(shell_word("my suite.json") == std::optional<std::string>("'my suite.json'"));
  CHECK(shell_word("$(touch x)") == std::optional<std::string>("'$(touch x)'"));
  CHECK(shell_word("it's") == std::optional<std::string>("'it'\\''s'"));
  CHECK(shell_word("") == std::optional<std::string>("''"));
  CHECK_FALSE(shell_word("a\nb").has_value());
  CHECK(visible_line("a\nb\tc") == "a\\x0ab\\x09c");
}
