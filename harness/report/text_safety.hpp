// Text from suites, results and programs' output, made safe for the format it is written
// into: valid UTF-8 (a program may print any bytes), and for Markdown inert text on one line.
#pragma once
#include <string>
#include <string_view>

namespace stepgate {

/// `s` with every byte that does not start or continue a valid UTF-8 sequence (overlong forms,
/// surrogates and code points above U+10FFFF included) replaced by U+FFFD.
std::string valid_utf8(std::string_view s);

/// Markdown text on one line that renders as exactly these characters: line breaks become
/// spaces, & < > become character references (no raw HTML), the punctuation Markdown reads as
/// syntax mid-line (\ ` * _ [ ] ~ |) is escaped with a backslash (no link, image, emphasis,
/// strike-through, code span or table cell break from a name; a heading or list needs its mark at
/// the start of a line, where no name is written), other control bytes show as \xNN, invalid
/// UTF-8 as U+FFFD.
std::string markdown_text(std::string_view s);

}  // namespace stepgate
