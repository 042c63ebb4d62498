#pragma once
// The report's figures from plain data (vectors and strings), so that any command can draw
// them: maps of a field on the basin's grid with streamline contours and a colour bar, scatter
// plots, line plots, grouped bars, a parameter sweep, a two-parameter map and a chart of skill
// changes. Each function returns a Figure: a standalone SVG document with its title and the
// caption the HTML page prints beneath it.
//
// Layout is fixed in pixels (one figure row fits a 1200 px page); panels sit side by side.

#include <optional>
#include <string>
#include <vector>

#include "harness/report/axes.hpp"

namespace plateau::report {

struct Figure {
  std::string name;     // file stem of figures/NAME.svg and the HTML anchor
  std::string title;    // one line
  std::string caption;  // what it shows, for a reader who has not read the code
  std::string svg;      // the whole SVG document
};

// A field on the nodes of a (nx + 1) x (ny + 1) grid, x fastest, coordinates in km.
struct GridField {
  int nx = 0;
  int ny = 0;
  double lx_km = 0.0;
  double ly_km = 0.0;
  std::vector<double> values;  // (nx + 1) (ny + 1)
  [[nodiscard]] double at(int i, int j) const {
    return values[static_cast<std::size_t>(j) * static_cast<std::size_t>(nx + 1) +
                  static_cast<std::size_t>(i)];
  }
};

// One line segment of a contour, in grid coordinates (i, j real).
struct Segment {
  Point a;
  Point b;
};
// Marching squares on the grid's cells: the segments where the field crosses `level` (saddle
// cells resolved by the cell's mean).
std::vector<Segment> contour_segments(const GridField& f, double level);
// n levels evenly spaced strictly inside the field's range, symmetric about zero when the field
// changes sign (so that zero is a level when n is odd), none for a constant field.
std::vector<double> contour_levels(const GridField& f, int n);

struct MapPanel {
  std::string title;
  GridField field;
  std::optional<GridField> contours;  // drawn in grey: solid >= 0, dashed < 0
  ColourMap map = ColourMap::sequential;
  ColourRange range;
  std::string quantity;        // colour-bar title: "q"
  std::string unit;            // "s-1"
  bool interior_only = false;  // wall nodes left blank (their values follow a wall condition)
};
// Panels side by side, each with its own colour bar; x and y in km.
Figure map_figure(std::string name, std::string title, std::string caption,
                  const std::vector<MapPanel>& panels);

struct PointSet {
  std::string label;
  std::vector<double> x;
  std::vector<double> y;
  std::string colour;
  double radius = 2.0;
  double opacity = 0.7;
};
struct ScatterPanel {
  std::string title;
  AxisSpec x;
  AxisSpec y;
  std::vector<PointSet> sets;
};
Figure scatter_figure(std::string name, std::string title, std::string caption,
                      const std::vector<ScatterPanel>& panels);

struct LineSeries {
  std::string label;
  std::vector<double> x;
  std::vector<double> y;
  std::string colour;
  bool dashed = false;
  bool markers = false;
};
struct Marker {
  double x = 0.0;  // a vertical line at x (the start of the averaging window, say)
  std::string label;
};
struct LinePanel {
  std::string title;
  AxisSpec x;
  AxisSpec y;
  std::vector<LineSeries> series;
  std::vector<Marker> markers;
};
Figure line_figure(std::string name, std::string title, std::string caption,
                   const std::vector<LinePanel>& panels);

// Grouped bars: one group per entry of `groups` (closures), one bar per entry of `bars`
// (categories) within it; values[g][b], nothing where undefined (drawn as a small cross).
struct BarChart {
  std::vector<std::string> groups;
  std::vector<std::string> bars;
  std::vector<std::vector<std::optional<double>>> values;
  AxisSpec y;  // skill: fixed to [0, 1] by the caller
};
Figure bar_figure(std::string name, std::string title, std::string caption, const BarChart& chart);

// A tune's evaluations: skill (or any score) against one parameter, the best marked.
struct Sweep {
  AxisSpec parameter;
  std::vector<double> x;
  std::vector<double> score;
  std::string score_name = "overall skill";
  std::optional<std::size_t> best;
};
Figure sweep_figure(std::string name, std::string title, std::string caption,
                    const std::vector<Sweep>& panels);

// A tune over two parameters: each evaluation a dot at (x, y) coloured by its score, with a
// colour bar, the best circled.
struct ParameterMap {
  AxisSpec x;
  AxisSpec y;
  std::vector<double> px;
  std::vector<double> py;
  std::vector<double> score;
  std::string score_name = "overall skill";
  std::optional<std::size_t> best;
};
Figure parameter_map_figure(std::string name, std::string title, std::string caption,
                            const ParameterMap& map);

// Skill changes against a baseline: one horizontal bar per row (new - old skill), the rows that
// fail drawn in the diverging map's negative colour and marked.
struct ChangeRow {
  std::string label;  // "case / closure / metric"
  std::optional<double> old_skill;
  std::optional<double> new_skill;
  bool failed = false;
};
Figure change_figure(std::string name, std::string title, std::string caption,
                     const std::vector<ChangeRow>& rows);

}  // namespace plateau::report
