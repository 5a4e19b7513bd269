// The one <style> block of report.html (no external styles or fonts: the file works offline).
#pragma once
#include <string_view>

namespace stepgate {

/// CSS for the page and its inline SVG figures; colours of the range bar and the verdict.
std::string_view html_report_css();

}  // namespace stepgate
