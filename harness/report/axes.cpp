#include "harness/report/axes.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <limits>

namespace plateau::report {
namespace {

const char* superscript(char ch) {
  switch (ch) {
    case '0':
      return "\u2070";
    case '1':
      return "\u00b9";
    case '2':
      return "\u00b2";
    case '3':
      return "\u00b3";
    case '4':
      return "\u2074";
    case '5':
      return "\u2075";
    case '6':
      return "\u2076";
    case '7':
      return "\u2077";
    case '8':
      return "\u2078";
    case '9':
      return "\u2079";
    case '-':
      return "\u207b";
    default:
      return nullptr;
  }
}

std::string superscripted(const std::string& digits) {
  std::string out;
  for (const char ch : digits) {
    const char* s = superscript(ch);
    out += s ? s : std::string(1, ch);
  }
  return out;
}

// Rough width of a label in px (the report uses sans-serif at ~0.58 em per character).
double text_width(const std::string& s, double size) {
  std::size_t chars = 0;
  for (const char ch : s) {
    if ((static_cast<unsigned char>(ch) & 0xC0U) != 0x80U) ++chars;  // UTF-8 lead bytes
  }
  return 0.58 * size * static_cast<double>(chars);
}

std::string log_label(double v) {
  const double e = std::log10(v);
  if (std::abs(e - std::round(e)) < 1e-9) {
    const int p = static_cast<int>(std::lround(e));
    if (p >= -2 && p <= 3) {
      char buf[32];
      std::snprintf(buf, sizeof buf, "%g", v);
      return buf;
    }
    return "10" + superscripted(std::to_string(p));
  }
  char buf[32];
  std::snprintf(buf, sizeof buf, "%g", v);
  return buf;
}

const Stroke kFrame{"#444444", 1.0, ""};
const Stroke kTick{"#444444", 1.0, ""};
constexpr double kLabelSize = 11.0;
constexpr double kTitleSize = 12.0;

}  // namespace

double nice_number(double x, bool round) {
  if (!(x > 0.0) || !std::isfinite(x)) return 1.0;
  const double e = std::floor(std::log10(x));
  const double p = std::pow(10.0, e);
  const double f = x / p;
  double nf = 10.0;
  if (round) {
    if (f < 1.5) {
      nf = 1.0;
    } else if (f < 3.0) {
      nf = 2.0;
    } else if (f < 7.0) {
      nf = 5.0;
    }
  } else {
    if (f <= 1.0) {
      nf = 1.0;
    } else if (f <= 2.0) {
      nf = 2.0;
    } else if (f <= 5.0) {
      nf = 5.0;
    }
  }
  return nf * p;
}

namespace {

void widen_degenerate(double& lo, double& hi) {
  if (!std::isfinite(lo) || !std::isfinite(hi)) {
    lo = 0.0;
    hi = 1.0;
  }
  if (lo > hi) std::swap(lo, hi);
  if (hi - lo <= 1e-12 * std::max(std::abs(lo), std::abs(hi))) {
    const double pad = lo == 0.0 ? 1.0 : 0.5 * std::abs(lo);
    lo -= pad;
    hi += pad;
  }
}

}  // namespace

Ticks loose_ticks(double lo, double hi, int target) {
  widen_degenerate(lo, hi);
  const double range = nice_number(hi - lo, false);
  const double step = nice_number(range / std::max(1, target - 1), true);
  Ticks t;
  t.step = step;
  t.lo = std::floor(lo / step + 1e-9) * step;
  t.hi = std::ceil(hi / step - 1e-9) * step;
  for (double v = t.lo; v <= t.hi + 0.5 * step; v += step) {
    t.values.push_back(std::abs(v) < 1e-12 * step ? 0.0 : v);
  }
  return t;
}

Ticks tight_ticks(double lo, double hi, int target) {
  widen_degenerate(lo, hi);
  const double range = nice_number(hi - lo, false);
  double step = nice_number(range / std::max(1, target - 1), true);
  // Keep at least two ticks inside a narrow range.
  while (std::floor(hi / step + 1e-9) - std::ceil(lo / step - 1e-9) < 1.0 && step > 0) {
    step = nice_number(step / 2.1, true);
  }
  Ticks t;
  t.lo = lo;
  t.hi = hi;
  t.step = step;
  for (double v = std::ceil(lo / step - 1e-9) * step; v <= hi + 1e-9 * step; v += step) {
    t.values.push_back(std::abs(v) < 1e-12 * step ? 0.0 : v);
  }
  return t;
}

Ticks log_ticks(double lo, double hi) {
  Ticks t;
  if (!(lo > 0.0) || !(hi > 0.0) || !std::isfinite(lo) || !std::isfinite(hi)) {
    lo = 1.0;
    hi = 10.0;
  }
  if (lo > hi) std::swap(lo, hi);
  if (hi / lo < 1.0 + 1e-9) {
    lo /= 2.0;
    hi *= 2.0;
  }
  t.lo = lo;
  t.hi = hi;
  const int d0 = static_cast<int>(std::floor(std::log10(lo) + 1e-9));
  const int d1 = static_cast<int>(std::ceil(std::log10(hi) - 1e-9));
  const bool fine = d1 - d0 <= 2;
  for (int d = d0; d <= d1; ++d) {
    for (const double m : {1.0, 2.0, 5.0}) {
      if (m != 1.0 && !fine) continue;
      const double v = m * std::pow(10.0, d);
      if (v >= lo * (1 - 1e-9) && v <= hi * (1 + 1e-9)) t.values.push_back(v);
    }
  }
  return t;
}

std::string tick_label(double value, double step) {
  if (step <= 0.0) return log_label(value);
  const int decimals = std::max(0, static_cast<int>(std::ceil(-std::log10(step) - 1e-9)));
  char buf[64];
  std::snprintf(buf, sizeof buf, "%.*f", std::min(decimals, 12), value);
  std::string s = buf;
  if (s.rfind("-0", 0) == 0 && s.find_first_not_of("-0.") == std::string::npos) s = s.substr(1);
  // A proper minus sign reads better than a hyphen.
  if (!s.empty() && s[0] == '-') s = "\u2212" + s.substr(1);
  return s;
}

int display_exponent(double max_abs) {
  if (!(max_abs > 0.0) || !std::isfinite(max_abs)) return 0;
  if (max_abs >= 0.01 && max_abs < 1000.0) return 0;
  return static_cast<int>(std::floor(std::log10(max_abs) + 1e-12));
}

std::string pretty_unit(const std::string& udunits) {
  std::string out;
  std::size_t i = 0;
  while (i < udunits.size()) {
    const std::size_t j = std::min(udunits.find(' ', i), udunits.size());
    std::string token = udunits.substr(i, j - i);
    // A trailing signed integer is an exponent: "s-1" -> s⁻¹, "m2" -> m².
    std::size_t k = token.size();
    while (k > 0 && (std::isdigit(static_cast<unsigned char>(token[k - 1])) != 0)) --k;
    if (k > 0 && token[k - 1] == '-' && k < token.size()) --k;
    if (k > 0 && k < token.size() && std::isalpha(static_cast<unsigned char>(token[k - 1])) != 0) {
      token = token.substr(0, k) + superscripted(token.substr(k));
    }
    if (!out.empty()) out += ' ';
    out += token;
    i = j + 1;
  }
  return out;
}

std::string axis_title(const std::string& name, const std::string& unit, int exponent) {
  std::string inside;
  if (exponent != 0) inside = "10" + superscripted(std::to_string(exponent));
  if (!unit.empty()) inside += (inside.empty() ? "" : " ") + pretty_unit(unit);
  return inside.empty() ? name : name + " (" + inside + ")";
}

double Scale::operator()(double v) const {
  if (log) {
    const double a = std::log10(std::max(v0, 1e-300));
    const double b = std::log10(std::max(v1, 1e-300));
    const double x = std::log10(std::max(v, 1e-300));
    return b == a ? p0 : p0 + (x - a) / (b - a) * (p1 - p0);
  }
  return v1 == v0 ? p0 : p0 + (v - v0) / (v1 - v0) * (p1 - p0);
}

Ticks axis_ticks(const AxisSpec& spec, double data_lo, double data_hi) {
  const double lo = spec.lo.value_or(data_lo);
  const double hi = spec.hi.value_or(data_hi);
  if (spec.log) return log_ticks(lo, hi);
  if (spec.tight || (spec.lo && spec.hi)) return tight_ticks(lo, hi);
  return loose_ticks(lo, hi);
}

void draw_x_axis(Svg& svg, const Box& area, const Scale& sx, const Ticks& t,
                 const std::string& title, int exponent, bool log) {
  const double scale = std::pow(10.0, exponent);
  for (const double v : t.values) {
    const double x = sx(v);
    svg.line({x, area.bottom()}, {x, area.bottom() + 4}, kTick);
    svg.text({x, area.bottom() + 16}, log ? log_label(v) : tick_label(v / scale, t.step / scale),
             {kLabelSize, Anchor::middle});
  }
  svg.text({area.x + 0.5 * area.w, area.bottom() + 34}, title, {kTitleSize, Anchor::middle});
  svg.rect(area, "none", &kFrame);
}

void draw_y_axis(Svg& svg, const Box& area, const Scale& sy, const Ticks& t,
                 const std::string& title, int exponent, bool log) {
  const double scale = std::pow(10.0, exponent);
  double widest = 0.0;
  for (const double v : t.values) {
    const double y = sy(v);
    svg.line({area.x - 4, y}, {area.x, y}, kTick);
    const std::string label = log ? log_label(v) : tick_label(v / scale, t.step / scale);
    widest = std::max(widest, text_width(label, kLabelSize));
    svg.text({area.x - 7, y + 4}, label, {kLabelSize, Anchor::end});
  }
  const Point at{area.x - 14 - widest, area.y + 0.5 * area.h};
  svg.text(at, title, {kTitleSize, Anchor::middle, -90.0});
  svg.rect(area, "none", &kFrame);
}

ColourRange colour_range(ColourMap map, const std::vector<const std::vector<double>*>& values) {
  double lo = std::numeric_limits<double>::infinity();
  double hi = -lo;
  for (const std::vector<double>* v : values) {
    if (v == nullptr) continue;
    for (const double x : *v) {
      if (!std::isfinite(x)) continue;
      lo = std::min(lo, x);
      hi = std::max(hi, x);
    }
  }
  if (!(lo <= hi)) return map == ColourMap::diverging ? ColourRange{-1.0, 1.0} : ColourRange{0, 1};
  if (map == ColourMap::diverging) {
    const double m = std::max(std::abs(lo), std::abs(hi));
    return m > 0.0 ? ColourRange{-m, m} : ColourRange{-1.0, 1.0};
  }
  if (hi - lo <= 1e-12 * std::max(std::abs(lo), std::abs(hi))) {
    const double pad = lo == 0.0 ? 0.5 : 0.5 * std::abs(lo);
    return {lo - pad, hi + pad};
  }
  return {lo, hi};
}

Rgb colour_of(ColourMap map, const ColourRange& range, double v) {
  const double t = range.hi > range.lo ? (v - range.lo) / (range.hi - range.lo) : 0.5;
  return map == ColourMap::sequential ? sequential(t) : diverging(t);
}

int colour_step(const ColourRange& range, double v) {
  const double t = range.hi > range.lo ? (v - range.lo) / (range.hi - range.lo) : 0.5;
  const int s = static_cast<int>(std::floor(t * kColourSteps));
  return std::clamp(s, 0, kColourSteps - 1);
}

Rgb colour_of_step(ColourMap map, int step) {
  const double t = (step + 0.5) / kColourSteps;
  return map == ColourMap::sequential ? sequential(t) : diverging(t);
}

void draw_colour_bar(Svg& svg, const Box& area, ColourMap map, const ColourRange& range,
                     const std::string& name, const std::string& unit) {
  const double dh = area.h / kColourSteps;
  svg.begin_group("colour-bar");
  for (int s = 0; s < kColourSteps; ++s) {
    // Slight overlap so that no hairline gaps show between the strips.
    svg.rect({area.x, area.bottom() - (s + 1) * dh, area.w, dh + 0.6}, hex(colour_of_step(map, s)));
  }
  const Scale sy{range.lo, range.hi, area.bottom(), area.y};
  const Ticks t = tight_ticks(range.lo, range.hi, 5);
  const int p = display_exponent(std::max(std::abs(range.lo), std::abs(range.hi)));
  const double scale = std::pow(10.0, p);
  double widest = 0.0;
  for (const double v : t.values) {
    const double y = sy(v);
    svg.line({area.right(), y}, {area.right() + 4, y}, kTick);
    const std::string label = tick_label(v / scale, t.step / scale);
    widest = std::max(widest, text_width(label, kLabelSize));
    svg.text({area.right() + 7, y + 4}, label, {kLabelSize, Anchor::start});
  }
  svg.text({area.right() + 16 + widest, area.y + 0.5 * area.h}, axis_title(name, unit, p),
           {kTitleSize, Anchor::middle, 90.0});
  svg.rect(area, "none", &kFrame);
  svg.end_group();
}

}  // namespace plateau::report
