// The report's figure code (harness/report/) and the terminal progress line (harness/cli/
// progress.hpp): tick placement, axis ranges and colour-bar limits on known data, the colour
// maps' lightness against the CIELAB formulas they are built on, contours, well-formed SVG, a
// report from a folder holding only tune and regress files, and the progress line's format.

#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <regex>
#include <string>
#include <vector>

#include <gtest/gtest.h>

#include "harness/cli/progress.hpp"
#include "harness/report/axes.hpp"
#include "harness/report/colour.hpp"
#include "harness/report/figures.hpp"
#include "harness/report/report.hpp"

namespace plateau::report {
namespace {

namespace fs = std::filesystem;

// A small well-formedness check of XML: every tag closed in order, attributes quoted, no stray
// '<' or '&' in text (XML 1.0, sections 2.4 and 3.1).
bool well_formed(const std::string& xml, std::string& why) {
  std::vector<std::string> stack;
  std::size_t i = 0;
  while (i < xml.size()) {
    if (xml[i] == '&') {
      const std::size_t semi = xml.find(';', i);
      if (semi == std::string::npos || semi - i > 8) {
        why = "bare & at " + std::to_string(i);
        return false;
      }
      i = semi + 1;
      continue;
    }
    if (xml[i] != '<') {
      ++i;
      continue;
    }
    const std::size_t end = xml.find('>', i);
    if (end == std::string::npos) {
      why = "unclosed tag at " + std::to_string(i);
      return false;
    }
    const std::string tag = xml.substr(i + 1, end - i - 1);
    if (tag.find('<') != std::string::npos) {
      why = "'<' inside a tag at " + std::to_string(i);
      return false;
    }
    std::size_t quotes = 0;
    for (const char ch : tag) quotes += ch == '"' ? 1U : 0U;
    if (quotes % 2 != 0) {
      why = "unbalanced quotes in <" + tag + ">";
      return false;
    }
    if (tag.empty()) {
      why = "empty tag";
      return false;
    }
    if (tag[0] == '/') {
      const std::string name = tag.substr(1);
      if (stack.empty() || stack.back() != name) {
        why = "</" + name + "> closes " + (stack.empty() ? std::string("nothing") : stack.back());
        return false;
      }
      stack.pop_back();
    } else if (tag.back() != '/' && tag[0] != '?' && tag[0] != '!') {
      stack.push_back(tag.substr(0, tag.find_first_of(" \n\t")));
    }
    i = end + 1;
  }
  if (!stack.empty()) {
    why = "<" + stack.back() + "> never closed";
    return false;
  }
  return true;
}

std::vector<std::string> text_elements(const std::string& svg) {
  std::vector<std::string> out;
  const std::regex re("<text[^>]*>([^<]*)</text>");
  for (auto it = std::sregex_iterator(svg.begin(), svg.end(), re); it != std::sregex_iterator();
       ++it) {
    out.push_back((*it)[1].str());
  }
  return out;
}

bool has_text(const std::string& svg, const std::string& s) {
  for (const std::string& t : text_elements(svg)) {
    if (t == s) return true;
  }
  return false;
}

// ---- ticks and ranges -----------------------------------------------------------------------

TEST(ReportTicks, HeckbertLooseLabelling) {
  // Heckbert (1990), "Nice numbers for graph labels", worked by hand for 5 ticks:
  // [0.13, 0.87]: range nice(0.74) = 1, step nice(1/4 = 0.25, rounded) = 0.2 -> [0, 1].
  const Ticks a = loose_ticks(0.13, 0.87, 5);
  EXPECT_DOUBLE_EQ(a.step, 0.2);
  EXPECT_DOUBLE_EQ(a.lo, 0.0);
  EXPECT_NEAR(a.hi, 1.0, 1e-12);
  EXPECT_EQ(a.values.size(), 6U);
  // [-3.2, 47]: range nice(50.2) = 100, step nice(25, rounded) = 20 -> [-20, 60].
  const Ticks b = loose_ticks(-3.2, 47.0, 5);
  EXPECT_DOUBLE_EQ(b.step, 20.0);
  EXPECT_DOUBLE_EQ(b.lo, -20.0);
  EXPECT_DOUBLE_EQ(b.hi, 60.0);
  EXPECT_EQ(b.values.size(), 5U);
  EXPECT_DOUBLE_EQ(b.values[1], 0.0);
}

TEST(ReportTicks, TightTicksStayInsideTheBasin) {
  // A 1000 km basin: nice(1000) = 1000, step nice(250, rounded) = 200 (Heckbert's rule).
  const Ticks t = tight_ticks(0.0, 1000.0, 5);
  EXPECT_DOUBLE_EQ(t.lo, 0.0);
  EXPECT_DOUBLE_EQ(t.hi, 1000.0);
  ASSERT_EQ(t.values.size(), 6U);
  EXPECT_DOUBLE_EQ(t.values.back(), 1000.0);
  // 3840 km: step nice(nice(3840) = 5000 / 4 = 1250, rounded) = 1000; ticks 0..3000.
  const Ticks u = tight_ticks(0.0, 3840.0, 5);
  EXPECT_DOUBLE_EQ(u.step, 1000.0);
  EXPECT_DOUBLE_EQ(u.values.back(), 3000.0);
}

TEST(ReportTicks, LogTicksAtDecades) {
  // [0.005, 0.1] spans under two decades: 1, 2 and 5 times each decade inside it.
  const Ticks t = log_ticks(0.005, 0.1);
  const std::vector<double> want = {0.005, 0.01, 0.02, 0.05, 0.1};
  ASSERT_EQ(t.values.size(), want.size());
  for (std::size_t i = 0; i < want.size(); ++i) EXPECT_NEAR(t.values[i], want[i], 1e-15);
}

TEST(ReportTicks, LabelsAndUnits) {
  EXPECT_EQ(tick_label(0.2, 0.2), "0.2");
  EXPECT_EQ(tick_label(-20.0, 20.0), "\u221220");
  EXPECT_EQ(tick_label(1e-17, 0.2), "0.0");
  EXPECT_EQ(display_exponent(1.3e-4), -4);
  EXPECT_EQ(display_exponent(29.4), 0);
  EXPECT_EQ(display_exponent(1.39e13), 13);
  EXPECT_EQ(pretty_unit("m2 s-1"), "m\u00b2 s\u207b\u00b9");
  EXPECT_EQ(axis_title("q", "s-1", -5), "q (10\u207b\u2075 s\u207b\u00b9)");
  EXPECT_EQ(axis_title("skill", ""), "skill");
}

TEST(ReportColourBar, LimitsOnKnownData) {
  const std::vector<double> a = {1.0, 2.0, 3.0};
  const std::vector<double> b = {0.5, std::nan("")};
  const ColourRange s = colour_range(ColourMap::sequential, {&a, &b});
  EXPECT_DOUBLE_EQ(s.lo, 0.5);  // the smallest finite value given
  EXPECT_DOUBLE_EQ(s.hi, 3.0);
  const std::vector<double> d = {-2.0, 1.0, 0.5};
  const ColourRange z = colour_range(ColourMap::diverging, {&d});
  EXPECT_DOUBLE_EQ(z.lo, -2.0);  // symmetric: +-max |value|, zero in the middle
  EXPECT_DOUBLE_EQ(z.hi, 2.0);
  const std::vector<double> flat = {4.0, 4.0};
  const ColourRange f = colour_range(ColourMap::sequential, {&flat});
  EXPECT_LT(f.lo, 4.0);
  EXPECT_GT(f.hi, 4.0);
}

TEST(ReportColourBar, MapFigureShowsTheDataRange) {
  // A 4 x 4 field f = i + j over a 400 km basin: values 0..8, so the colour bar of a sequential
  // panel runs from 0 to 8 with tight ticks 0, 2, 4, 6, 8 (Heckbert: nice(8) = 10, step 2).
  GridField f;
  f.nx = 4;
  f.ny = 4;
  f.lx_km = 400.0;
  f.ly_km = 400.0;
  for (int j = 0; j <= 4; ++j) {
    for (int i = 0; i <= 4; ++i) f.values.push_back(i + j);
  }
  MapPanel p;
  p.title = "panel";
  p.field = f;
  p.contours = f;
  p.range = colour_range(ColourMap::sequential, {&f.values});
  p.quantity = "q";
  p.unit = "s-1";
  EXPECT_DOUBLE_EQ(p.range.lo, 0.0);
  EXPECT_DOUBLE_EQ(p.range.hi, 8.0);
  const Figure fig = map_figure("t", "title", "caption", {p});
  for (const char* v : {"0", "2", "4", "6", "8"}) EXPECT_TRUE(has_text(fig.svg, v)) << v;
  EXPECT_TRUE(has_text(fig.svg, "q (s\u207b\u00b9)"));
  EXPECT_TRUE(has_text(fig.svg, "x (km)"));
  EXPECT_TRUE(has_text(fig.svg, "y (km)"));
  EXPECT_TRUE(has_text(fig.svg, "400"));  // the basin's extent is the axis range
  std::string why;
  EXPECT_TRUE(well_formed(fig.svg, why)) << why;
  // The lowest and highest cells carry the bar's first and last colour steps.
  EXPECT_EQ(colour_step(p.range, 0.0), 0);
  EXPECT_EQ(colour_step(p.range, 8.0), kColourSteps - 1);
  EXPECT_EQ(colour_step(p.range, 4.0), kColourSteps / 2);  // the middle of [0, 8]
  EXPECT_NE(fig.svg.find("fill=\"" + hex(colour_of_step(ColourMap::sequential, 0)) + "\" d="),
            std::string::npos);
  EXPECT_NE(fig.svg.find("fill=\"" + hex(colour_of_step(ColourMap::sequential, 63)) + "\" d="),
            std::string::npos);
}

// ---- colour maps ----------------------------------------------------------------------------

TEST(ReportColour, CielabReferenceValues) {
  // CIE 15:2004: the white point has L* = 100, a* = b* = 0; sRGB grey 119 (IEC 61966-2-1
  // decoding gives 0.18447 linear) has L* = 116 * 0.18447^(1/3) - 16 = 50.03.
  const Lab w = lab_from_srgb({1.0, 1.0, 1.0});
  EXPECT_NEAR(w.l, 100.0, 0.01);
  EXPECT_NEAR(w.a, 0.0, 0.05);
  EXPECT_NEAR(w.b, 0.0, 0.05);
  const Lab g = lab_from_srgb({119.0 / 255.0, 119.0 / 255.0, 119.0 / 255.0});
  EXPECT_NEAR(g.l, 50.03, 0.01);
  // Round trip through the forward formula.
  const Rgb back = srgb_from_lab({50.0, 20.0, -30.0});
  const Lab again = lab_from_srgb(back);
  EXPECT_NEAR(again.l, 50.0, 0.02);
  EXPECT_NEAR(again.a, 20.0, 0.05);
  EXPECT_NEAR(again.b, -30.0, 0.05);
}

TEST(ReportColour, SequentialLightnessIsTheRampAndMonotone) {
  // The ramp L* = 20 + 75 t (colour.hpp); 8-bit colours as a browser shows them stay within
  // 0.6 of it (one 8-bit step moves L* by at most about 0.5 at these lightnesses).
  double previous = -1.0;
  for (int s = 0; s <= 64; ++s) {
    const double t = s / 64.0;
    const Lab lab = lab_from_srgb(from_hex(hex(sequential(t))));
    EXPECT_NEAR(lab.l, 20.0 + 75.0 * t, 0.6) << "t = " << t;
    EXPECT_GT(lab.l, previous) << "t = " << t;
    previous = lab.l;
  }
  EXPECT_NEAR(lab_from_srgb(from_hex(hex(sequential(0.0)))).l, 20.0, 0.6);
  EXPECT_NEAR(lab_from_srgb(from_hex(hex(sequential(1.0)))).l, 95.0, 0.6);
}

TEST(ReportColour, DivergingIsSymmetricAndNeutralAtZero) {
  // L* = 97 - 62 |2t - 1| (colour.hpp): equal lightness at equal |value|, the lightest and
  // neutral (chroma near 0) at zero, blue (b* < 0) below and red (a* > 0) above.
  for (int s = 0; s <= 32; ++s) {
    const double t = s / 64.0;
    const Lab lo = lab_from_srgb(from_hex(hex(diverging(t))));
    const Lab hi = lab_from_srgb(from_hex(hex(diverging(1.0 - t))));
    EXPECT_NEAR(lo.l, hi.l, 0.8) << "t = " << t;
    EXPECT_NEAR(lo.l, 97.0 - 62.0 * std::abs(2 * t - 1), 0.6) << "t = " << t;
  }
  const Lab mid = lab_from_srgb(from_hex(hex(diverging(0.5))));
  EXPECT_NEAR(mid.l, 97.0, 0.6);
  EXPECT_LT(std::hypot(mid.a, mid.b), 1.5);
  EXPECT_LT(lab_from_srgb(from_hex(hex(diverging(0.0)))).b, -20.0);
  EXPECT_GT(lab_from_srgb(from_hex(hex(diverging(1.0)))).a, 20.0);
  // Zero sits at the centre of a diverging colour bar.
  EXPECT_EQ(hex(colour_of(ColourMap::diverging, {-3.0, 3.0}, 0.0)), hex(diverging(0.5)));
}

// ---- contours -------------------------------------------------------------------------------

TEST(ReportContours, StraightLineThroughAPlane) {
  // f = i on a 3 x 2 grid: the level 1.5 is the vertical line i = 1.5, one segment per row of
  // cells (linear interpolation is exact for a linear field).
  GridField f;
  f.nx = 3;
  f.ny = 2;
  f.lx_km = 3;
  f.ly_km = 2;
  for (int j = 0; j <= 2; ++j) {
    for (int i = 0; i <= 3; ++i) f.values.push_back(i);
  }
  const std::vector<Segment> s = contour_segments(f, 1.5);
  ASSERT_EQ(s.size(), 2U);
  for (const Segment& g : s) {
    EXPECT_DOUBLE_EQ(g.a.x, 1.5);
    EXPECT_DOUBLE_EQ(g.b.x, 1.5);
    EXPECT_DOUBLE_EQ(std::abs(g.b.y - g.a.y), 1.0);
  }
  // Levels symmetric about zero for a field of both signs: [-3, 1] with 3 levels -> -1.5, 0
  // (1.5 lies outside the data).
  GridField g = f;
  for (double& v : g.values) v -= 2.0;
  g.values[0] = -3.0;
  const std::vector<double> lv = contour_levels(g, 3);
  ASSERT_EQ(lv.size(), 2U);
  EXPECT_DOUBLE_EQ(lv[0], -1.5);
  EXPECT_DOUBLE_EQ(lv[1], 0.0);
}

// ---- other figures --------------------------------------------------------------------------

TEST(ReportFigures, LinesScatterBarsAreWellFormedWithUnits) {
  LinePanel lp;
  lp.title = "energy";
  lp.x = {"model time", "years", false, std::nullopt, std::nullopt, false};
  lp.y = {"total energy", "J", false, std::nullopt, std::nullopt, false};
  lp.series.push_back({"a & b <run>", {0.0, 0.5, 1.0}, {1e12, 3e12, 2e12}, "#000000", false, true});
  lp.markers.push_back({0.25, "averaging starts"});
  const Figure line = line_figure("l", "Lines", "caption", {lp});
  std::string why;
  EXPECT_TRUE(well_formed(line.svg, why)) << why;
  // Energies 1e12..3e12 J: padded 4% and loosely labelled, the title carries 10^12.
  EXPECT_TRUE(has_text(line.svg, "total energy (10\u00b9\u00b2 J)"));
  EXPECT_TRUE(has_text(line.svg, "model time (years)"));
  EXPECT_TRUE(has_text(line.svg, "a &amp; b &lt;run&gt;"));  // escaped, not raw

  BarChart c;
  c.groups = {"none", "eady"};
  c.bars = {"plateau", "overall"};
  c.values = {{0.3, 0.5}, {std::nullopt, 0.7}};
  c.y = {"skill", "", false, 0.0, 1.0, true};
  const Figure bars = bar_figure("b", "Bars", "caption", c);
  EXPECT_TRUE(well_formed(bars.svg, why)) << why;
  for (const char* v : {"0.0", "0.2", "0.4", "0.6", "0.8", "1.0"}) {
    EXPECT_TRUE(has_text(bars.svg, v)) << v;  // a [0, 1] axis with Heckbert's step 0.2
  }

  ParameterMap m;
  m.x = {"alpha", "", true, std::nullopt, std::nullopt, false};
  m.y = {"u_e", "m s-1", true, std::nullopt, std::nullopt, false};
  m.px = {0.01, 0.02, 0.05};
  m.py = {0.1, 0.2, 0.3};
  m.score = {0.2, 0.4, 0.3};
  m.best = 1;
  const Figure map = parameter_map_figure("m", "Map", "caption", m);
  EXPECT_TRUE(well_formed(map.svg, why)) << why;
  EXPECT_TRUE(has_text(map.svg, "u_e (m s\u207b\u00b9)"));

  const Figure ch = change_figure("c", "Changes", "caption",
                                  {{"tiny / eady / energy.total", 0.8, 0.6, true},
                                   {"tiny / none / overall", 0.3, 0.31, false}});
  EXPECT_TRUE(well_formed(ch.svg, why)) << why;
}

TEST(ReportPage, TuneAndRegressFilesAloneMakeAReport) {
  const fs::path dir = fs::path(PLATEAU_BINARY_DIR) / "test-report-folder";
  fs::remove_all(dir);
  fs::create_directories(dir);
  {
    std::ofstream t(dir / "tune-log.jsonl");
    t << R"({"closure":"eady","parameters":[{"name":"alpha","unit":"1","log":true},)"
      << R"({"name":"u_e_m_per_s","unit":"m s-1","log":true}]})" << '\n'
      << R"({"n":0,"params":{"alpha":0.01,"u_e_m_per_s":0.05},"skill":0.3,"objective":0.7})" << '\n'
      << R"({"n":1,"params":{"alpha":0.02,"u_e_m_per_s":0.1},"skill":0.5,"objective":0.5})" << '\n'
      << "not json\n";
    std::ofstream r(dir / "regress.json");
    r << R"({"pairs":[{"case":"tiny","name":"eady","changes":[)"
      << R"({"id":"energy.total","kind":"regressed","old":0.8,"new":0.6}]}]})";
  }
  const ReportResult res = write_report(dir);
  EXPECT_EQ(res.html, dir / "report.html");
  ASSERT_EQ(res.figures.size(), 3U);  // tune-parameters, tune-map, regress-changes
  EXPECT_EQ(res.figures[0].filename(), "tune-parameters.svg");
  EXPECT_EQ(res.figures[1].filename(), "tune-map.svg");
  EXPECT_EQ(res.figures[2].filename(), "regress-changes.svg");
  EXPECT_EQ(res.warnings.size(), 1U);  // the line that is not JSON
  std::ifstream in(res.html);
  const std::string page((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
  EXPECT_NE(page.find("tiny / eady / energy.total"), std::string::npos);
  EXPECT_EQ(page.find("<script"), std::string::npos);
  std::string why;
  for (const fs::path& f : res.figures) {
    std::ifstream s(f);
    const std::string svg((std::istreambuf_iterator<char>(s)), std::istreambuf_iterator<char>());
    EXPECT_TRUE(well_formed(svg, why)) << f << ": " << why;
  }
  // A folder with nothing to report is an error that names what was expected.
  const fs::path empty = dir / "empty";
  fs::create_directories(empty);
  EXPECT_THROW((void)write_report(empty), std::exception);
  fs::remove_all(dir);
}

}  // namespace
}  // namespace plateau::report

// ---- progress -------------------------------------------------------------------------------

namespace plateau::cli {
namespace {

std::string capture(bool terminal, const std::vector<Progress>& reports) {
  std::FILE* f = std::tmpfile();
  auto print = progress_printer("run x", false, terminal, f);
  for (const Progress& p : reports) print(p);
  std::fflush(f);
  std::rewind(f);
  std::string out;
  char buf[256];
  while (std::fgets(buf, sizeof buf, f) != nullptr) out += buf;
  std::fclose(f);
  return out;
}

std::vector<Progress> one_year_in_100_steps() {
  // 100 steps of 3.65 days over 10 s of wall time: 1 model year in 10 s = 360 years per hour.
  std::vector<Progress> v;
  for (int s = 0; s <= 100; ++s) {
    Progress p;
    p.step = s;
    p.total_steps = 100;
    p.model_time_s = s * 0.01 * 365.0 * 86400.0;
    p.wall_s = 0.1 * s;
    v.push_back(p);
  }
  return v;
}

TEST(Progress, LogGetsALineEveryFivePercent) {
  const std::string out = capture(false, one_year_in_100_steps());
  std::size_t lines = 0;
  for (const char ch : out) lines += ch == '\n' ? 1U : 0U;
  EXPECT_EQ(lines, 21U);  // 0%, 5%, ..., 100%
  EXPECT_NE(out.find(" 50.0%  0.50 model years  360 years/hour  5 s left"), std::string::npos)
      << out;
  EXPECT_NE(out.find("100.0%  1.00 model years  360 years/hour  0 s left"), std::string::npos);
  EXPECT_EQ(out.find('\r'), std::string::npos);
}

TEST(Progress, TerminalRewritesOneLine) {
  const std::string out = capture(true, one_year_in_100_steps());
  std::size_t newlines = 0;
  for (const char ch : out) newlines += ch == '\n' ? 1U : 0U;
  EXPECT_EQ(newlines, 1U);  // only the final report ends the line
  EXPECT_NE(out.find('\r'), std::string::npos);
  EXPECT_NE(out.find("100.0%"), std::string::npos);
}

TEST(Progress, QuietPrintsNothing) { EXPECT_FALSE(progress_printer("run x", true, true, stderr)); }

TEST(Progress, Durations) {
  EXPECT_EQ(format_duration(42.0), "42 s");
  EXPECT_EQ(format_duration(150.0), "2.5 min");
  EXPECT_EQ(format_duration(3.0 * 3600.0), "3.0 h");
  EXPECT_EQ(format_duration(3.0 * 86400.0), "3.0 days");
  EXPECT_EQ(format_duration(-1.0), "-");
}

}  // namespace
}  // namespace plateau::cli
