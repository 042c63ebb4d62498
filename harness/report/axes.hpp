#pragma once
// Axes of the report's figures: tick placement, value-to-pixel scales, axis and colour-bar
// drawing, and the power-of-ten factor that keeps tick labels short (q in 10^-5 s^-1).
//
// Ticks follow Heckbert's "nice numbers" labelling (P. S. Heckbert, "Nice numbers for graph
// labels", Graphics Gems, 1990): the step is 1, 2 or 5 times a power of ten, chosen so that about
// `target` ticks span the range; a loose range widens the data range out to whole steps.
// Logarithmic axes tick at the decades (and at 2 and 5 times them when there are few decades).

#include <optional>
#include <string>
#include <vector>

#include "harness/report/colour.hpp"
#include "harness/report/svg.hpp"

namespace plateau::report {

// Heckbert's nice number: 1, 2, 5 or 10 times a power of ten near x (> 0); `round` picks the
// nearest, otherwise the smallest not below x.
double nice_number(double x, bool round);

struct Ticks {
  double lo = 0.0;  // the axis range
  double hi = 1.0;
  double step = 0.0;  // 0 on a log axis
  std::vector<double> values;
};

// Loose labelling: lo and hi widened to multiples of the step. A degenerate range (lo == hi, or
// no finite data) is widened around its value first.
Ticks loose_ticks(double lo, double hi, int target = 5);
// Ticks inside a fixed range [lo, hi] (map axes: the basin's extent; colour bars: the data's).
Ticks tight_ticks(double lo, double hi, int target = 5);
// Decades (and 2, 5 times them when the range spans at most two decades), within [lo, hi] > 0.
Ticks log_ticks(double lo, double hi);

// A tick label: fixed notation with as many decimals as the step needs.
std::string tick_label(double value, double step);
// The power of ten p with which values up to max_abs read as 1..999 (0 for max_abs in [0.01,
// 1000)).
int display_exponent(double max_abs);
// "q (10⁻⁵ s⁻¹)" style axis titles: the name, and in brackets the power of ten (if p != 0) and
// the unit (if any). Units are written with Unicode superscripts ("m2 s-1" -> "m² s⁻¹").
std::string axis_title(const std::string& name, const std::string& unit, int exponent = 0);
std::string pretty_unit(const std::string& udunits);

// A value-to-pixel map along one axis (pixels may run backwards: y up).
struct Scale {
  double v0 = 0.0;
  double v1 = 1.0;
  double p0 = 0.0;
  double p1 = 1.0;
  bool log = false;
  [[nodiscard]] double operator()(double v) const;
};

struct AxisSpec {
  std::string name;  // "time", "x"
  std::string unit;  // UDUNITS-like text: "km", "m2 s-1", "" for none
  bool log = false;
  std::optional<double> lo;  // fixed range; else from the data (loose)
  std::optional<double> hi;
  bool tight = false;  // ticks inside the data range instead of widening it
};

// Ticks for an axis over data [lo, hi] following the spec.
Ticks axis_ticks(const AxisSpec& spec, double data_lo, double data_hi);

// Draws the frame, ticks, tick labels and titles of a plot area; values are divided by
// 10^exponent for the labels (the exponent appears in the title).
void draw_x_axis(Svg& svg, const Box& area, const Scale& sx, const Ticks& t,
                 const std::string& title, int exponent, bool log);
void draw_y_axis(Svg& svg, const Box& area, const Scale& sy, const Ticks& t,
                 const std::string& title, int exponent, bool log);

enum class ColourMap { sequential, diverging };

// The colour range of a field: sequential [min, max] over the values given; diverging
// [-m, m] with m = max |value| (zero in the middle). Non-finite values are ignored; an empty or
// constant set gets a unit-wide range around its value.
struct ColourRange {
  double lo = 0.0;
  double hi = 1.0;
};
ColourRange colour_range(ColourMap map, const std::vector<const std::vector<double>*>& values);
// The colour of v on a map over a range.
Rgb colour_of(ColourMap map, const ColourRange& range, double v);
// Fields and colour bars use kColourSteps equal steps of the range, so that every colour in a
// map can be read off its bar: the step of v (0 .. kColourSteps - 1, clamped) and its colour.
inline constexpr int kColourSteps = 64;
int colour_step(const ColourRange& range, double v);
Rgb colour_of_step(ColourMap map, int step);
// A vertical colour bar in `area` with tick labels on its right and the title beside them.
void draw_colour_bar(Svg& svg, const Box& area, ColourMap map, const ColourRange& range,
                     const std::string& name, const std::string& unit);

}  // namespace plateau::report
