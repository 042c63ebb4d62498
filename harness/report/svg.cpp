#include "harness/report/svg.hpp"

#include <atomic>
#include <cmath>
#include <cstdio>
#include <stdexcept>

namespace plateau::report {
namespace {

// Clip ids must be unique within an HTML page that inlines several figures.
std::string next_prefix() {
  static std::atomic<int> counter{0};
  return "f" + std::to_string(counter++) + "c";
}

const char* anchor_name(Anchor a) {
  switch (a) {
    case Anchor::start:
      return "start";
    case Anchor::middle:
      return "middle";
    case Anchor::end:
      return "end";
  }
  return "start";
}

std::string stroke_attrs(const Stroke& s) {
  std::string a = " stroke=\"" + xml_escape(s.colour) + "\" stroke-width=\"" + num(s.width) + "\"";
  if (!s.dash.empty()) a += " stroke-dasharray=\"" + xml_escape(s.dash) + "\"";
  return a;
}

}  // namespace

std::string num(double v) {
  if (!std::isfinite(v)) return "0";
  char buf[32];
  std::snprintf(buf, sizeof buf, "%.2f", v);
  std::string s = buf;
  while (!s.empty() && s.back() == '0') s.pop_back();
  if (!s.empty() && s.back() == '.') s.pop_back();
  if (s == "-0") s = "0";
  return s;
}

Svg::Svg(double width, double height) : width_(width), height_(height), id_prefix_(next_prefix()) {}

void Svg::rect(const Box& b, std::string_view fill, const Stroke* stroke) {
  body_ += "<rect x=\"" + num(b.x) + "\" y=\"" + num(b.y) + "\" width=\"" + num(b.w) +
           "\" height=\"" + num(b.h) + "\" fill=\"" + xml_escape(fill) + "\"";
  body_ += stroke ? stroke_attrs(*stroke) : std::string(" stroke=\"none\"");
  body_ += "/>\n";
}

void Svg::line(Point a, Point b, const Stroke& stroke) {
  body_ += "<line x1=\"" + num(a.x) + "\" y1=\"" + num(a.y) + "\" x2=\"" + num(b.x) + "\" y2=\"" +
           num(b.y) + "\"" + stroke_attrs(stroke) + "/>\n";
}

void Svg::polyline(const std::vector<Point>& points, const Stroke& stroke) {
  if (points.size() < 2) return;
  body_ += "<polyline fill=\"none\" stroke-linejoin=\"round\" points=\"";
  for (std::size_t i = 0; i < points.size(); ++i) {
    if (i) body_ += ' ';
    body_ += num(points[i].x) + "," + num(points[i].y);
  }
  body_ += "\"" + stroke_attrs(stroke) + "/>\n";
}

void Svg::segments(const std::vector<std::pair<Point, Point>>& pieces, const Stroke& stroke) {
  if (pieces.empty()) return;
  body_ += "<path fill=\"none\" d=\"";
  for (const auto& [a, b] : pieces) {
    body_ += "M" + num(a.x) + " " + num(a.y) + "L" + num(b.x) + " " + num(b.y);
  }
  body_ += "\"" + stroke_attrs(stroke) + "/>\n";
}

void Svg::dots(const std::vector<Point>& centres, double radius, std::string_view colour,
               double opacity) {
  if (centres.empty()) return;
  body_ += "<path fill=\"none\" stroke=\"" + xml_escape(colour) + "\" stroke-width=\"" +
           num(2.0 * radius) + "\" stroke-linecap=\"round\"";
  if (opacity < 1.0) body_ += " stroke-opacity=\"" + num(opacity) + "\"";
  body_ += " d=\"";
  for (const Point& c : centres) body_ += "M" + num(c.x) + " " + num(c.y) + "h0";
  body_ += "\"/>\n";
}

void Svg::filled_path(std::string_view d, std::string_view fill) {
  body_ += "<path fill=\"" + xml_escape(fill) + "\" d=\"" + xml_escape(d) + "\"/>\n";
}

void Svg::circle(Point c, double radius, std::string_view fill, std::string_view stroke,
                 double opacity) {
  body_ += "<circle cx=\"" + num(c.x) + "\" cy=\"" + num(c.y) + "\" r=\"" + num(radius) +
           "\" fill=\"" + xml_escape(fill) + "\" stroke=\"" + xml_escape(stroke) + "\"";
  if (opacity < 1.0) body_ += " fill-opacity=\"" + num(opacity) + "\"";
  body_ += "/>\n";
}

void Svg::text(Point at, std::string_view text, const TextStyle& style) {
  body_ += "<text x=\"" + num(at.x) + "\" y=\"" + num(at.y) + "\" font-size=\"" + num(style.size) +
           "\" text-anchor=\"" + anchor_name(style.anchor) + "\" fill=\"" + xml_escape(style.fill) +
           "\"";
  if (style.bold) body_ += " font-weight=\"bold\"";
  if (style.rotate_deg != 0.0) {
    body_ +=
        " transform=\"rotate(" + num(style.rotate_deg) + " " + num(at.x) + " " + num(at.y) + ")\"";
  }
  body_ += ">" + xml_escape(text) + "</text>\n";
}

void Svg::begin_clip(const Box& b) {
  const std::string id = id_prefix_ + std::to_string(clip_count_++);
  body_ += "<clipPath id=\"" + id + "\"><rect x=\"" + num(b.x) + "\" y=\"" + num(b.y) +
           "\" width=\"" + num(b.w) + "\" height=\"" + num(b.h) + "\"/></clipPath>\n";
  body_ += "<g clip-path=\"url(#" + id + ")\">\n";
  ++open_groups_;
}

void Svg::end_clip() { end_group(); }

void Svg::begin_group(std::string_view css_class) {
  body_ += "<g class=\"" + xml_escape(css_class) + "\">\n";
  ++open_groups_;
}

void Svg::end_group() {
  if (open_groups_ == 0) throw std::logic_error("Svg: end_group without an open group");
  body_ += "</g>\n";
  --open_groups_;
}

std::string Svg::document(std::string_view title) const {
  if (open_groups_ != 0) throw std::logic_error("Svg: a group is still open");
  std::string d = "<svg xmlns=\"http://www.w3.org/2000/svg\" version=\"1.1\" width=\"" +
                  num(width_) + "\" height=\"" + num(height_) + "\" viewBox=\"0 0 " + num(width_) +
                  " " + num(height_) + "\" font-family=\"sans-serif\" role=\"img\">\n<title>" +
                  xml_escape(title) + "</title>\n";
  d += "<rect x=\"0\" y=\"0\" width=\"" + num(width_) + "\" height=\"" + num(height_) +
       "\" fill=\"#ffffff\"/>\n";
  d += body_;
  d += "</svg>\n";
  return d;
}

}  // namespace plateau::report
