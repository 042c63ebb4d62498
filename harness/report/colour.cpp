#include "harness/report/colour.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <numbers>
#include <stdexcept>

namespace plateau::report {
namespace {

// D65 reference white (CIE 15:2004).
constexpr double kXn = 0.95047;
constexpr double kYn = 1.0;
constexpr double kZn = 1.08883;
constexpr double kDelta = 6.0 / 29.0;

double lab_f_inverse(double t) {
  return t > kDelta ? t * t * t : 3.0 * kDelta * kDelta * (t - 4.0 / 29.0);
}
double lab_f(double t) {
  return t > kDelta * kDelta * kDelta ? std::cbrt(t) : t / (3.0 * kDelta * kDelta) + 4.0 / 29.0;
}
// IEC 61966-2-1 transfer function and its inverse.
double encode(double c) {
  return c <= 0.0031308 ? 12.92 * c : 1.055 * std::pow(c, 1.0 / 2.4) - 0.055;
}
double decode(double c) { return c <= 0.04045 ? c / 12.92 : std::pow((c + 0.055) / 1.055, 2.4); }

bool in_gamut(const Rgb& c) {
  constexpr double e = 1e-9;
  return c.r >= -e && c.r <= 1 + e && c.g >= -e && c.g <= 1 + e && c.b >= -e && c.b <= 1 + e;
}

Rgb clamp01(Rgb c) {
  c.r = std::clamp(c.r, 0.0, 1.0);
  c.g = std::clamp(c.g, 0.0, 1.0);
  c.b = std::clamp(c.b, 0.0, 1.0);
  return c;
}

double clamp_t(double t) { return std::isfinite(t) ? std::clamp(t, 0.0, 1.0) : 0.5; }

}  // namespace

Rgb srgb_from_lab(const Lab& lab) {
  const double fy = (lab.l + 16.0) / 116.0;
  const double fx = fy + lab.a / 500.0;
  const double fz = fy - lab.b / 200.0;
  const double x = kXn * lab_f_inverse(fx);
  const double y = kYn * lab_f_inverse(fy);
  const double z = kZn * lab_f_inverse(fz);
  const double r = 3.2406 * x - 1.5372 * y - 0.4986 * z;
  const double g = -0.9689 * x + 1.8758 * y + 0.0415 * z;
  const double b = 0.0557 * x - 0.2040 * y + 1.0570 * z;
  return {encode(r), encode(g), encode(b)};
}

Lab lab_from_srgb(const Rgb& rgb) {
  const double r = decode(rgb.r);
  const double g = decode(rgb.g);
  const double b = decode(rgb.b);
  const double x = 0.4124 * r + 0.3576 * g + 0.1805 * b;
  const double y = 0.2126 * r + 0.7152 * g + 0.0722 * b;
  const double z = 0.0193 * r + 0.1192 * g + 0.9505 * b;
  const double fx = lab_f(x / kXn);
  const double fy = lab_f(y / kYn);
  const double fz = lab_f(z / kZn);
  return {116.0 * fy - 16.0, 500.0 * (fx - fy), 200.0 * (fy - fz)};
}

Rgb srgb_from_lch_in_gamut(double l, double c, double h_deg) {
  const double h = h_deg * std::numbers::pi / 180.0;
  const auto at = [&](double chroma) {
    return srgb_from_lab({l, chroma * std::cos(h), chroma * std::sin(h)});
  };
  Rgb best = at(c);
  if (in_gamut(best)) return clamp01(best);
  double lo = 0.0;
  double hi = c;
  best = at(0.0);
  for (int it = 0; it < 40; ++it) {
    const double mid = 0.5 * (lo + hi);
    const Rgb m = at(mid);
    if (in_gamut(m)) {
      lo = mid;
      best = m;
    } else {
      hi = mid;
    }
  }
  return clamp01(best);
}

double sequential_lightness(double t) { return 20.0 + 75.0 * clamp_t(t); }

double diverging_lightness(double t) { return 97.0 - 62.0 * std::abs(2.0 * clamp_t(t) - 1.0); }

Rgb sequential(double t) {
  t = clamp_t(t);
  const double chroma = 38.0 * std::pow(std::sin(std::numbers::pi * t), 0.6) + 8.0;
  return srgb_from_lch_in_gamut(sequential_lightness(t), chroma, 265.0 - 165.0 * t);
}

Rgb diverging(double t) {
  t = clamp_t(t);
  const double s = std::abs(2.0 * t - 1.0);
  return srgb_from_lch_in_gamut(diverging_lightness(t), 55.0 * s, t < 0.5 ? 255.0 : 30.0);
}

std::string hex(const Rgb& c) {
  const auto byte = [](double v) {
    return static_cast<unsigned>(std::lround(std::clamp(v, 0.0, 1.0) * 255.0));
  };
  char buf[8];
  std::snprintf(buf, sizeof buf, "#%02x%02x%02x", byte(c.r), byte(c.g), byte(c.b));
  return buf;
}

Rgb from_hex(const std::string& h) {
  if (h.size() != 7 || h[0] != '#') throw std::invalid_argument("not a #rrggbb colour: " + h);
  const auto byte = [&](std::size_t at) {
    return static_cast<double>(std::stoul(h.substr(at, 2), nullptr, 16)) / 255.0;
  };
  return {byte(1), byte(3), byte(5)};
}

const char* run_colour(std::size_t index) { return kRunColours[index % kRunColours.size()]; }

}  // namespace plateau::report
