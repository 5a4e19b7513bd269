// Escaping for HTML text and attribute values: every string that comes from a suite or from
// results goes through it before it reaches report.html.
#pragma once
#include <string>
#include <string_view>

namespace stepgate {

/// Replaces & < > " ' by their character references (&amp; &lt; &gt; &quot; &#39;), so the
/// result is safe both as element text and inside a quoted attribute value. Control bytes other
/// than tab and newline become the visible text \xNN; invalid UTF-8 becomes U+FFFD; valid UTF-8
/// passes unchanged.
std::string html_escape(std::string_view s);

}  // namespace stepgate
