#pragma once
// A small SVG 1.1 writer for the report's figures: rectangles, lines, polylines, circles and
// text in user units (1 unit = 1 CSS pixel), clipping groups, and the document around them.
// Every figure is one standalone, well-formed SVG document that a browser, an editor or a
// typesetting program opens as it is, and that the HTML page inlines unchanged. Text uses the
// generic "sans-serif" family: no font is fetched.

#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include "harness/io/xml.hpp"

namespace plateau::report {

struct Point {
  double x = 0.0;
  double y = 0.0;
};

struct Box {
  double x = 0.0;  // left
  double y = 0.0;  // top
  double w = 0.0;
  double h = 0.0;
  [[nodiscard]] double right() const { return x + w; }
  [[nodiscard]] double bottom() const { return y + h; }
};

enum class Anchor { start, middle, end };

struct TextStyle {
  double size = 12.0;  // px
  Anchor anchor = Anchor::start;
  double rotate_deg = 0.0;  // about the anchor point
  bool bold = false;
  std::string fill = "#222222";
};

struct Stroke {
  std::string colour = "#222222";
  double width = 1.0;
  std::string dash;  // SVG stroke-dasharray, empty: solid
};

// Text safe inside XML character data and attribute values (harness/io/xml.hpp).
using io::xml_escape;
// A coordinate or length with at most two decimals, no trailing zeros ("12.5", "3").
std::string num(double v);

class Svg {
 public:
  Svg(double width, double height);

  [[nodiscard]] double width() const { return width_; }
  [[nodiscard]] double height() const { return height_; }

  void rect(const Box& b, std::string_view fill, const Stroke* stroke = nullptr);
  void line(Point a, Point b, const Stroke& stroke);
  void polyline(const std::vector<Point>& points, const Stroke& stroke);
  // Unconnected line segments as one path element (contours: thousands of short pieces).
  void segments(const std::vector<std::pair<Point, Point>>& pieces, const Stroke& stroke);
  // Many dots of one colour as one path of zero-length round-capped pieces (SVG 1.1, section
  // 11.4: such a subpath paints a dot of the stroke width): a scatter of 10^4 points stays small.
  void dots(const std::vector<Point>& centres, double radius, std::string_view colour,
            double opacity = 1.0);
  // A filled path from SVG path data (no stroke).
  void filled_path(std::string_view d, std::string_view fill);
  void circle(Point c, double radius, std::string_view fill, std::string_view stroke = "none",
              double opacity = 1.0);
  void text(Point at, std::string_view text, const TextStyle& style = {});
  // Elements until end_clip() are clipped to the box.
  void begin_clip(const Box& b);
  void end_clip();
  // A group with a class name (for tests and styling) until end_group().
  void begin_group(std::string_view css_class);
  void end_group();

  // The complete document; `title` becomes its <title> (shown as a tooltip, read by screen
  // readers).
  [[nodiscard]] std::string document(std::string_view title) const;

 private:
  double width_;
  double height_;
  std::string body_;
  int clip_count_ = 0;
  int open_groups_ = 0;
  std::string id_prefix_;
};

}  // namespace plateau::report
