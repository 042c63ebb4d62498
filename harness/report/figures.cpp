#include "harness/report/figures.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <utility>

namespace plateau::report {
namespace {

constexpr double kTitleSize = 13.0;
constexpr double kLegendSize = 11.0;
const Stroke kGrid{"#e4e4e4", 1.0, ""};

struct Extent {
  double lo = std::numeric_limits<double>::infinity();
  double hi = -std::numeric_limits<double>::infinity();
  void add(double v, bool positive_only = false) {
    if (!std::isfinite(v) || (positive_only && v <= 0.0)) return;
    lo = std::min(lo, v);
    hi = std::max(hi, v);
  }
  [[nodiscard]] bool empty() const { return !(lo <= hi); }
};

int exponent_for(const Ticks& t, bool log) {
  if (log) return 0;
  return display_exponent(std::max(std::abs(t.lo), std::abs(t.hi)));
}

// A plot frame for one axis pair: ticks, scales, grid lines and axes.
struct Frame {
  Box area;
  Ticks tx;
  Ticks ty;
  Scale sx;
  Scale sy;
};

Frame make_frame(const Box& area, const AxisSpec& xs, const Extent& ex, const AxisSpec& ys,
                 const Extent& ey) {
  // Data points keep clear of the frame: a margin of 4% (or a factor 1.15 on a log axis)
  // where the axis range follows the data.
  const auto pad = [](const AxisSpec& s, Extent e) {
    if (e.empty()) return e;
    if (s.log) {
      if (!s.lo) e.lo /= 1.15;
      if (!s.hi) e.hi *= 1.15;
    } else {
      // The margin never crosses zero: a positive quantity keeps its axis at 0.
      const double m = 0.04 * (e.hi - e.lo);
      if (!s.lo) e.lo = e.lo >= 0.0 ? std::max(0.0, e.lo - m) : e.lo - m;
      if (!s.hi) e.hi = e.hi <= 0.0 ? std::min(0.0, e.hi + m) : e.hi + m;
    }
    return e;
  };
  const Extent px = pad(xs, ex);
  const Extent py = pad(ys, ey);
  Frame f;
  f.area = area;
  f.tx = axis_ticks(xs, px.empty() ? 0.0 : px.lo, px.empty() ? 1.0 : px.hi);
  f.ty = axis_ticks(ys, py.empty() ? 0.0 : py.lo, py.empty() ? 1.0 : py.hi);
  f.sx = {f.tx.lo, f.tx.hi, area.x, area.right(), xs.log};
  f.sy = {f.ty.lo, f.ty.hi, area.bottom(), area.y, ys.log};
  return f;
}

void draw_frame(Svg& svg, const Frame& f, const AxisSpec& xs, const AxisSpec& ys, bool grid) {
  if (grid) {
    for (const double v : f.ty.values) {
      svg.line({f.area.x, f.sy(v)}, {f.area.right(), f.sy(v)}, kGrid);
    }
  }
  const int px = exponent_for(f.tx, xs.log);
  const int py = exponent_for(f.ty, ys.log);
  draw_x_axis(svg, f.area, f.sx, f.tx, axis_title(xs.name, xs.unit, px), px, xs.log);
  draw_y_axis(svg, f.area, f.sy, f.ty, axis_title(ys.name, ys.unit, py), py, ys.log);
}

void panel_title(Svg& svg, const Box& area, const std::string& title) {
  svg.text({area.x + 0.5 * area.w, area.y - 9}, title, {kTitleSize, Anchor::middle, 0.0, true});
}

struct LegendEntry {
  std::string label;
  std::string colour;
  bool dashed = false;
  bool dot = false;
};

// A legend box in the top-left corner of a plot area.
void legend(Svg& svg, const Box& area, const std::vector<LegendEntry>& entries) {
  if (entries.empty()) return;
  double widest = 0.0;
  for (const LegendEntry& e : entries) {
    widest = std::max(widest, 0.6 * kLegendSize * static_cast<double>(e.label.size()));
  }
  const Box b{area.x + 6, area.y + 6, widest + 34, 16.0 * static_cast<double>(entries.size()) + 6};
  const Stroke edge{"#bbbbbb", 0.8, ""};
  svg.begin_group("legend");
  svg.rect(b, "#ffffff", &edge);
  for (std::size_t i = 0; i < entries.size(); ++i) {
    const double y = b.y + 12 + 16.0 * static_cast<double>(i);
    const LegendEntry& e = entries[i];
    if (e.dot) {
      svg.circle({b.x + 14, y - 3}, 3.5, e.colour);
    } else {
      svg.line({b.x + 5, y - 3}, {b.x + 23, y - 3}, {e.colour, 2.0, e.dashed ? "5 3" : ""});
    }
    svg.text({b.x + 29, y + 1}, e.label, {kLegendSize});
  }
  svg.end_group();
}

double clamp_aspect(double ly_over_lx) {
  if (!std::isfinite(ly_over_lx) || ly_over_lx <= 0) return 1.0;
  return std::clamp(ly_over_lx, 0.5, 1.6);
}

Figure finish(std::string name, std::string title, std::string caption, const Svg& svg) {
  Figure f;
  f.svg = svg.document(title);
  f.name = std::move(name);
  f.title = std::move(title);
  f.caption = std::move(caption);
  return f;
}

}  // namespace

// ---- contours -------------------------------------------------------------------------------

std::vector<Segment> contour_segments(const GridField& f, double level) {
  std::vector<Segment> out;
  if (f.nx < 1 || f.ny < 1) return out;
  const auto cross = [&](double i0, double j0, double v0, double i1, double j1, double v1) {
    const double t = (level - v0) / (v1 - v0);
    return Point{i0 + t * (i1 - i0), j0 + t * (j1 - j0)};
  };
  for (int j = 0; j < f.ny; ++j) {
    for (int i = 0; i < f.nx; ++i) {
      // Corners counter-clockwise from (i, j).
      const double v[4] = {f.at(i, j), f.at(i + 1, j), f.at(i + 1, j + 1), f.at(i, j + 1)};
      const double ci[4] = {static_cast<double>(i), i + 1.0, i + 1.0, static_cast<double>(i)};
      const double cj[4] = {static_cast<double>(j), static_cast<double>(j), j + 1.0, j + 1.0};
      bool finite = true;
      for (const double x : v) finite = finite && std::isfinite(x);
      if (!finite) continue;
      unsigned mask = 0;
      for (unsigned k = 0; k < 4; ++k) mask |= (v[k] >= level ? 1U : 0U) << k;
      if (mask == 0 || mask == 15) continue;
      // Crossing points on the edges whose ends differ.
      std::vector<std::pair<int, Point>> pts;
      for (int e = 0; e < 4; ++e) {
        const int a = e;
        const int b = (e + 1) % 4;
        if ((v[a] >= level) != (v[b] >= level)) {
          pts.emplace_back(e, cross(ci[a], cj[a], v[a], ci[b], cj[b], v[b]));
        }
      }
      if (pts.size() == 2) {
        out.push_back({pts[0].second, pts[1].second});
      } else if (pts.size() == 4) {
        // Saddle: join so that the cell's mean decides which corners are connected.
        const double mean = 0.25 * (v[0] + v[1] + v[2] + v[3]);
        const bool centre_high = mean >= level;
        const bool corner0_high = v[0] >= level;
        if (centre_high == corner0_high) {
          out.push_back({pts[0].second, pts[1].second});
          out.push_back({pts[2].second, pts[3].second});
        } else {
          out.push_back({pts[3].second, pts[0].second});
          out.push_back({pts[1].second, pts[2].second});
        }
      }
    }
  }
  return out;
}

std::vector<double> contour_levels(const GridField& f, int n) {
  Extent e;
  for (const double v : f.values) e.add(v);
  std::vector<double> levels;
  if (e.empty() || n < 1 || e.hi - e.lo <= 1e-12 * std::max(std::abs(e.lo), std::abs(e.hi))) {
    return levels;
  }
  if (e.lo < 0.0 && e.hi > 0.0) {
    const double m = std::max(-e.lo, e.hi);
    const double step = 2.0 * m / (n + 1);
    for (int k = 1; k <= n; ++k) {
      const double v = -m + k * step;
      if (v > e.lo && v < e.hi) levels.push_back(std::abs(v) < 1e-12 * m ? 0.0 : v);
    }
    return levels;
  }
  const double step = (e.hi - e.lo) / (n + 1);
  for (int k = 1; k <= n; ++k) levels.push_back(e.lo + k * step);
  return levels;
}

// ---- maps -----------------------------------------------------------------------------------

Figure map_figure(std::string name, std::string title, std::string caption,
                  const std::vector<MapPanel>& panels) {
  const double aspect =
      panels.empty() ? 1.0 : clamp_aspect(panels.front().field.ly_km / panels.front().field.lx_km);
  const double pw = panels.size() > 3 ? 190.0 : 230.0;
  const double ph = pw * aspect;
  const double left = 62.0;
  const double top = 30.0;
  const double bar_gap = 12.0;
  const double bar_w = 14.0;
  const double right = 78.0;
  const double panel_w = left + pw + bar_gap + bar_w + right;
  Svg svg(panel_w * static_cast<double>(std::max<std::size_t>(panels.size(), 1)), top + ph + 50.0);
  for (std::size_t p = 0; p < panels.size(); ++p) {
    const MapPanel& mp = panels[p];
    const GridField& f = mp.field;
    const Box area{static_cast<double>(p) * panel_w + left, top, pw, ph};
    const Scale sx{0.0, f.lx_km, area.x, area.right()};
    const Scale sy{0.0, f.ly_km, area.bottom(), area.y};
    svg.begin_group("map-panel");
    panel_title(svg, area, mp.title);
    if (f.nx > 0 && f.ny > 0 &&
        f.values.size() ==
            static_cast<std::size_t>(f.nx + 1) * static_cast<std::size_t>(f.ny + 1)) {
      const double dx = area.w / f.nx;
      const double dy = area.h / f.ny;
      svg.begin_clip(area);
      svg.begin_group("field");
      // Cells take the colour bar's kColourSteps colours, and the cells of one colour are one
      // path of rectangles (runs along x merged): a 64^2 field stays a few hundred kB.
      std::vector<std::string> paths(kColourSteps);
      for (int j = 0; j <= f.ny; ++j) {
        int i = 0;
        while (i <= f.nx) {
          const auto band_of = [&](int ii) {
            if (mp.interior_only && (ii == 0 || j == 0 || ii == f.nx || j == f.ny)) return -1;
            const double v = f.at(ii, j);
            return std::isfinite(v) ? colour_step(mp.range, v) : -1;
          };
          const int band = band_of(i);
          int run = 1;
          while (i + run <= f.nx && band_of(i + run) == band) ++run;
          if (band >= 0) {
            // Overlap by half a pixel so that no seams show between cells.
            const double x0 = area.x + (i - 0.5) * dx;
            const double y0 = area.bottom() - (j + 0.5) * dy;
            paths[static_cast<std::size_t>(band)] += "M" + num(x0) + " " + num(y0) + "h" +
                                                     num(run * dx + 0.5) + "v" + num(dy + 0.5) +
                                                     "h" + num(-(run * dx + 0.5)) + "z";
          }
          i += run;
        }
      }
      for (int b = 0; b < kColourSteps; ++b) {
        if (paths[static_cast<std::size_t>(b)].empty()) continue;
        svg.filled_path(paths[static_cast<std::size_t>(b)], hex(colour_of_step(mp.map, b)));
      }
      svg.end_group();
      if (mp.contours) {
        const GridField& c = *mp.contours;
        std::vector<std::pair<Point, Point>> pos;
        std::vector<std::pair<Point, Point>> neg;
        const double cdx = area.w / std::max(1, c.nx);
        const double cdy = area.h / std::max(1, c.ny);
        for (const double level : contour_levels(c, 10)) {
          for (const Segment& s : contour_segments(c, level)) {
            const Point a{area.x + s.a.x * cdx, area.bottom() - s.a.y * cdy};
            const Point b{area.x + s.b.x * cdx, area.bottom() - s.b.y * cdy};
            (level < 0.0 ? neg : pos).emplace_back(a, b);
          }
        }
        svg.begin_group("contours");
        svg.segments(pos, {"#303030", 0.9, ""});
        svg.segments(neg, {"#303030", 0.9, "3 2"});
        svg.end_group();
      }
      svg.end_clip();
    }
    const Ticks tx = tight_ticks(0.0, f.lx_km, 5);
    const Ticks ty = tight_ticks(0.0, f.ly_km, 5);
    draw_x_axis(svg, area, sx, tx, "x (km)", 0, false);
    draw_y_axis(svg, area, sy, ty, "y (km)", 0, false);
    draw_colour_bar(svg, {area.right() + bar_gap, area.y, bar_w, area.h}, mp.map, mp.range,
                    mp.quantity, mp.unit);
    svg.end_group();
  }
  return finish(std::move(name), std::move(title), std::move(caption), svg);
}

// ---- scatter --------------------------------------------------------------------------------

Figure scatter_figure(std::string name, std::string title, std::string caption,
                      const std::vector<ScatterPanel>& panels) {
  const double pw = panels.size() > 3 ? 220.0 : 280.0;
  const double ph = 240.0;
  const double left = 74.0;
  const double gap = 24.0;
  const double top = 30.0;
  const double panel_w = left + pw + gap;
  Svg svg(panel_w * static_cast<double>(std::max<std::size_t>(panels.size(), 1)) + 10,
          top + ph + 50);
  for (std::size_t p = 0; p < panels.size(); ++p) {
    const ScatterPanel& sp = panels[p];
    Extent ex;
    Extent ey;
    for (const PointSet& s : sp.sets) {
      for (std::size_t i = 0; i < s.x.size() && i < s.y.size(); ++i) {
        if (!std::isfinite(s.x[i]) || !std::isfinite(s.y[i])) continue;
        ex.add(s.x[i], sp.x.log);
        ey.add(s.y[i], sp.y.log);
      }
    }
    const Box area{static_cast<double>(p) * panel_w + left, top, pw, ph};
    const Frame fr = make_frame(area, sp.x, ex, sp.y, ey);
    svg.begin_group("scatter-panel");
    panel_title(svg, area, sp.title);
    draw_frame(svg, fr, sp.x, sp.y, true);
    svg.begin_clip(area);
    std::vector<LegendEntry> entries;
    for (const PointSet& s : sp.sets) {
      std::vector<Point> centres;
      for (std::size_t i = 0; i < s.x.size() && i < s.y.size(); ++i) {
        if (!std::isfinite(s.x[i]) || !std::isfinite(s.y[i])) continue;
        centres.push_back({fr.sx(s.x[i]), fr.sy(s.y[i])});
      }
      svg.begin_group("points");
      svg.dots(centres, s.radius, s.colour, s.opacity);
      svg.end_group();
      entries.push_back({s.label, s.colour, false, true});
    }
    svg.end_clip();
    legend(svg, area, entries);
    svg.end_group();
  }
  return finish(std::move(name), std::move(title), std::move(caption), svg);
}

// ---- lines ----------------------------------------------------------------------------------

Figure line_figure(std::string name, std::string title, std::string caption,
                   const std::vector<LinePanel>& panels) {
  const double pw = panels.size() > 1 ? 440.0 : 720.0;
  const double ph = 250.0;
  const double left = 80.0;
  const double gap = 30.0;
  const double top = 30.0;
  const double panel_w = left + pw + gap;
  Svg svg(panel_w * static_cast<double>(std::max<std::size_t>(panels.size(), 1)) + 10,
          top + ph + 50);
  for (std::size_t p = 0; p < panels.size(); ++p) {
    const LinePanel& lp = panels[p];
    Extent ex;
    Extent ey;
    for (const LineSeries& s : lp.series) {
      for (std::size_t i = 0; i < s.x.size() && i < s.y.size(); ++i) {
        if (!std::isfinite(s.x[i]) || !std::isfinite(s.y[i])) continue;
        ex.add(s.x[i], lp.x.log);
        ey.add(s.y[i], lp.y.log);
      }
    }
    const Box area{static_cast<double>(p) * panel_w + left, top, pw, ph};
    AxisSpec xs = lp.x;
    if (!xs.lo && !ex.empty()) xs.lo = ex.lo;  // time axes start at the data
    if (!xs.hi && !ex.empty()) xs.hi = ex.hi;
    const Frame fr = make_frame(area, xs, ex, lp.y, ey);
    svg.begin_group("line-panel");
    panel_title(svg, area, lp.title);
    draw_frame(svg, fr, xs, lp.y, true);
    svg.begin_clip(area);
    std::vector<LegendEntry> entries;
    for (const Marker& m : lp.markers) {
      const double x = fr.sx(m.x);
      svg.line({x, area.y}, {x, area.bottom()}, {"#888888", 1.0, "2 3"});
      svg.text({x + 4, area.bottom() - 6}, m.label, {10.0, Anchor::start, 0.0, false, "#555555"});
    }
    for (const LineSeries& s : lp.series) {
      std::vector<Point> pts;
      for (std::size_t i = 0; i < s.x.size() && i < s.y.size(); ++i) {
        if (!std::isfinite(s.x[i]) || !std::isfinite(s.y[i])) continue;
        pts.push_back({fr.sx(s.x[i]), fr.sy(s.y[i])});
      }
      svg.begin_group("series");
      svg.polyline(pts, {s.colour, 1.8, s.dashed ? "6 3" : ""});
      if (s.markers || pts.size() == 1) {
        for (const Point& q : pts) svg.circle(q, 2.5, s.colour);
      }
      svg.end_group();
      entries.push_back({s.label, s.colour, s.dashed, false});
    }
    svg.end_clip();
    legend(svg, area, entries);
    svg.end_group();
  }
  return finish(std::move(name), std::move(title), std::move(caption), svg);
}

// ---- bars -----------------------------------------------------------------------------------

Figure bar_figure(std::string name, std::string title, std::string caption, const BarChart& c) {
  const double bar_w = 16.0;
  const double group_gap = 26.0;
  const double group_w =
      bar_w * static_cast<double>(std::max<std::size_t>(c.bars.size(), 1)) + group_gap;
  const double pw = std::max(360.0, group_w * static_cast<double>(c.groups.size()));
  const double left = 70.0;
  const double top = 20.0;
  const double ph = 220.0;
  const double legend_w = 150.0;
  Svg svg(left + pw + 20 + legend_w, top + ph + 60);
  Extent ey;
  for (const auto& row : c.values) {
    for (const auto& v : row) {
      if (v) ey.add(*v);
    }
  }
  const Box area{left, top, pw, ph};
  const Ticks ty = axis_ticks(c.y, ey.empty() ? 0.0 : ey.lo, ey.empty() ? 1.0 : ey.hi);
  const Scale sy{ty.lo, ty.hi, area.bottom(), area.y};
  svg.begin_group("bar-chart");
  for (const double v : ty.values) svg.line({area.x, sy(v)}, {area.right(), sy(v)}, kGrid);
  const double slot = pw / static_cast<double>(std::max<std::size_t>(c.groups.size(), 1));
  for (std::size_t g = 0; g < c.groups.size(); ++g) {
    const double x0 = area.x + slot * static_cast<double>(g) + 0.5 * (slot - group_w + group_gap);
    for (std::size_t b = 0; b < c.bars.size(); ++b) {
      const double x = x0 + bar_w * static_cast<double>(b);
      const std::optional<double> v =
          g < c.values.size() && b < c.values[g].size() ? c.values[g][b] : std::nullopt;
      if (v && std::isfinite(*v)) {
        const double y = sy(std::clamp(*v, ty.lo, ty.hi));
        const double y0 = sy(std::clamp(0.0, ty.lo, ty.hi));
        svg.rect({x + 1, std::min(y, y0), bar_w - 2, std::abs(y0 - y)}, run_colour(b));
      } else {
        const double yb = area.bottom() - 6;
        svg.line({x + 4, yb - 4}, {x + bar_w - 4, yb + 4}, {"#999999", 1.2, ""});
        svg.line({x + 4, yb + 4}, {x + bar_w - 4, yb - 4}, {"#999999", 1.2, ""});
      }
    }
    svg.text({area.x + slot * (static_cast<double>(g) + 0.5), area.bottom() + 16}, c.groups[g],
             {11.0, Anchor::middle});
  }
  const int py = exponent_for(ty, false);
  draw_y_axis(svg, area, sy, ty, axis_title(c.y.name, c.y.unit, py), py, false);
  svg.rect(area, "none", nullptr);
  svg.text({area.x + 0.5 * area.w, area.bottom() + 36}, "closure", {12.0, Anchor::middle});
  // Legend on the right.
  for (std::size_t b = 0; b < c.bars.size(); ++b) {
    const double y = area.y + 8 + 18.0 * static_cast<double>(b);
    svg.rect({area.right() + 20, y, 12, 12}, run_colour(b));
    svg.text({area.right() + 38, y + 10}, c.bars[b], {kLegendSize});
  }
  svg.end_group();
  return finish(std::move(name), std::move(title), std::move(caption), svg);
}

// ---- tune -----------------------------------------------------------------------------------

Figure sweep_figure(std::string name, std::string title, std::string caption,
                    const std::vector<Sweep>& panels) {
  std::vector<ScatterPanel> sp;
  sp.reserve(panels.size());
  for (const Sweep& s : panels) {
    ScatterPanel p;
    p.title = s.parameter.name;
    p.x = s.parameter;
    p.y = {s.score_name, "", false, std::nullopt, std::nullopt, false};
    p.sets.push_back({"evaluations", s.x, s.score, run_colour(4), 3.0, 0.75});
    if (s.best && *s.best < s.x.size() && *s.best < s.score.size()) {
      p.sets.push_back({"best", {s.x[*s.best]}, {s.score[*s.best]}, run_colour(3), 6.0, 1.0});
    }
    sp.push_back(std::move(p));
  }
  return scatter_figure(std::move(name), std::move(title), std::move(caption), sp);
}

Figure parameter_map_figure(std::string name, std::string title, std::string caption,
                            const ParameterMap& m) {
  const double pw = 360.0;
  const double ph = 280.0;
  const double left = 80.0;
  const double top = 20.0;
  Svg svg(left + pw + 12 + 14 + 90, top + ph + 50);
  Extent ex;
  Extent ey;
  const std::size_t n = std::min({m.px.size(), m.py.size(), m.score.size()});
  for (std::size_t i = 0; i < n; ++i) {
    ex.add(m.px[i], m.x.log);
    ey.add(m.py[i], m.y.log);
  }
  const Box area{left, top, pw, ph};
  const Frame fr = make_frame(area, m.x, ex, m.y, ey);
  const ColourRange range = colour_range(ColourMap::sequential, {&m.score});
  svg.begin_group("parameter-map");
  draw_frame(svg, fr, m.x, m.y, false);
  svg.begin_clip(area);
  for (std::size_t i = 0; i < n; ++i) {
    if (!std::isfinite(m.px[i]) || !std::isfinite(m.py[i])) continue;
    svg.circle({fr.sx(m.px[i]), fr.sy(m.py[i])}, 5.0,
               hex(colour_of(ColourMap::sequential, range, m.score[i])), "#555555");
  }
  if (m.best && *m.best < n) {
    svg.circle({fr.sx(m.px[*m.best]), fr.sy(m.py[*m.best])}, 9.0, "none", "#d55e00");
  }
  svg.end_clip();
  draw_colour_bar(svg, {area.right() + 12, area.y, 14, area.h}, ColourMap::sequential, range,
                  m.score_name, "");
  svg.end_group();
  return finish(std::move(name), std::move(title), std::move(caption), svg);
}

// ---- regress --------------------------------------------------------------------------------

Figure change_figure(std::string name, std::string title, std::string caption,
                     const std::vector<ChangeRow>& rows) {
  std::size_t longest = 10;
  for (const ChangeRow& r : rows) longest = std::max(longest, r.label.size());
  const double label_w = std::min(420.0, 6.4 * static_cast<double>(longest) + 12);
  const double pw = 360.0;
  const double row_h = 18.0;
  const double top = 14.0;
  const double ph = row_h * static_cast<double>(std::max<std::size_t>(rows.size(), 1)) + 8;
  Svg svg(label_w + pw + 150, top + ph + 50);
  double m = 0.0;
  for (const ChangeRow& r : rows) {
    if (r.old_skill && r.new_skill) m = std::max(m, std::abs(*r.new_skill - *r.old_skill));
  }
  const Ticks tx = loose_ticks(-std::max(m, 0.01), std::max(m, 0.01), 5);
  const Box area{label_w, top, pw, ph};
  const Scale sx{tx.lo, tx.hi, area.x, area.right()};
  svg.begin_group("change-chart");
  for (const double v : tx.values) svg.line({sx(v), area.y}, {sx(v), area.bottom()}, kGrid);
  svg.line({sx(0.0), area.y}, {sx(0.0), area.bottom()}, {"#444444", 1.0, ""});
  for (std::size_t i = 0; i < rows.size(); ++i) {
    const ChangeRow& r = rows[i];
    const double y = area.y + 4 + row_h * static_cast<double>(i);
    svg.text({area.x - 8, y + 12}, r.label,
             {10.5, Anchor::end, 0.0, r.failed, r.failed ? "#b2182b" : "#222222"});
    std::string right_text;
    if (r.old_skill && r.new_skill) {
      const double d = *r.new_skill - *r.old_skill;
      const double x0 = sx(0.0);
      const double x1 = sx(d);
      // Blue: better; light red: worse within the tolerance; dark red: regressed.
      const std::string colour =
          r.failed ? hex(diverging(1.0)) : (d >= 0 ? hex(diverging(0.2)) : hex(diverging(0.75)));
      svg.rect({std::min(x0, x1), y + 2, std::max(std::abs(x1 - x0), 1.0), row_h - 6}, colour);
      right_text = tick_label(*r.old_skill, 0.001) + " \u2192 " + tick_label(*r.new_skill, 0.001);
    } else if (r.old_skill) {
      right_text = "missing now (was " + tick_label(*r.old_skill, 0.001) + ")";
    } else if (r.new_skill) {
      right_text = "new: " + tick_label(*r.new_skill, 0.001);
    }
    if (r.failed) right_text += "  regressed";
    svg.text({area.right() + 8, y + 12}, right_text,
             {10.5, Anchor::start, 0.0, false, r.failed ? "#b2182b" : "#222222"});
  }
  draw_x_axis(svg, area, sx, tx, "skill change, new \u2212 baseline", 0, false);
  svg.end_group();
  return finish(std::move(name), std::move(title), std::move(caption), svg);
}

}  // namespace plateau::report
