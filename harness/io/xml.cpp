#include "harness/io/xml.hpp"

namespace plateau::io {

std::string xml_escape(std::string_view text) {
  std::string out;
  out.reserve(text.size());
  for (const char ch : text) {
    switch (ch) {
      case '&':
        out += "&amp;";
        break;
      case '<':
        out += "&lt;";
        break;
      case '>':
        out += "&gt;";
        break;
      case '"':
        out += "&quot;";
        break;
      case '\'':
        out += "&#39;";
        break;
      case '\n':
      case '\t':
      case '\r':
        out += ch;
        break;
      default:
        // The XML 1.0 Char production excludes the other C0 control characters.
        if (static_cast<unsigned char>(ch) >= 0x20) out += ch;
        break;
    }
  }
  return out;
}

}  // namespace plateau::io
