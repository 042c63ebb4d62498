#pragma once
// The report's colour maps, built here from CIELAB lightness ramps so that equal steps of the
// data give equal steps of perceived lightness (the property a reader's eye relies on to judge
// a field's gradients; Kovesi 2015, "Good colour maps: how to design them", arXiv:1509.03700).
//
//   sequential(t), t in [0, 1]: L* = 20 + 75 t (dark to light), hue h = 265 - 165 t degrees
//     (deep blue through teal to a pale sand colour), chroma 38 sin(pi t)^0.6 + 8, reduced where
//     it would leave the sRGB gamut; lightness alone carries the value.
//   diverging(t), t in [0, 1] with 0.5 the centre (zero): L* = 97 - 62 |2t - 1|, the same on
//     both sides, hue 255 degrees (blue) below the centre and 30 degrees (red) above, chroma
//     55 |2t - 1|: a neutral near-white at zero and equal lightness at equal |value|.
//
// Conversions (CIELCh -> CIELAB -> XYZ -> sRGB) follow CIE 15:2004 (CIELAB, D65 white point
// Xn = 0.95047, Yn = 1, Zn = 1.08883) and IEC 61966-2-1:1999 (the sRGB matrix and transfer
// function). Where the requested chroma is outside the gamut it is reduced by bisection at fixed
// L* and hue, so the lightness ramp is exact up to 8-bit rounding.

#include <array>
#include <string>

namespace plateau::report {

struct Rgb {
  double r = 0.0;  // sRGB components in [0, 1] (gamma-encoded)
  double g = 0.0;
  double b = 0.0;
};

struct Lab {
  double l = 0.0;  // L*, 0 (black) to 100 (white)
  double a = 0.0;
  double b = 0.0;
};

// CIELAB (D65) to gamma-encoded sRGB, unclipped (components may leave [0, 1]).
Rgb srgb_from_lab(const Lab& lab);
// Gamma-encoded sRGB to CIELAB (D65).
Lab lab_from_srgb(const Rgb& rgb);
// CIELCh (lightness, chroma, hue in degrees) to sRGB, the chroma reduced until the colour is in
// gamut.
Rgb srgb_from_lch_in_gamut(double l, double c, double h_deg);

// The two maps (see the header comment); t is clamped to [0, 1].
Rgb sequential(double t);
Rgb diverging(double t);
// The ramps they are built on, for tests and captions.
double sequential_lightness(double t);
double diverging_lightness(double t);

// "#rrggbb", each component rounded to 8 bits.
std::string hex(const Rgb& c);
// The 8-bit colour back as sRGB in [0, 1] (what a browser shows).
Rgb from_hex(const std::string& hex);

// Line and marker colours for runs: the colour-blind-safe set of Okabe and Ito (2008), "Color
// Universal Design" (orange, sky blue, bluish green, vermillion, blue, reddish purple, yellow);
// the truth is drawn in black.
inline constexpr std::array<const char*, 7> kRunColours = {
    "#e69f00", "#56b4e9", "#009e73", "#d55e00", "#0072b2", "#cc79a7", "#f0e442"};
inline constexpr const char* kTruthColour = "#000000";
const char* run_colour(std::size_t index);

}  // namespace plateau::report
