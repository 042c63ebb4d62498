#pragma once
// Escaping text for XML 1.0 (and HTML): one helper for every XML file the project writes (the
// report's SVG and HTML, the regression suite's JUnit XML).

#include <string>
#include <string_view>

namespace plateau::io {

// Text safe inside XML character data and attribute values: & < > " ' become entities, and
// control characters that XML 1.0 forbids are dropped (tab, newline and carriage return stay).
[[nodiscard]] std::string xml_escape(std::string_view text);

}  // namespace plateau::io
