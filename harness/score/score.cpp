#include "harness/score/score.hpp"

#include <cmath>
#include <cstdio>
#include <sstream>
#include <stdexcept>
#include <utility>

#include "harness/score/apriori.hpp"
#include "harness/score/plateau.hpp"
#include "harness/score/transport.hpp"

namespace plateau {
namespace {

std::size_t uz(int k) { return static_cast<std::size_t>(k); }

std::string layer_label(int k) { return "L" + std::to_string(k + 1); }

std::string num(double x) {
  char buf[32];
  std::snprintf(buf, sizeof buf, "%.6g", x);
  return buf;
}

void check_run(const ScoreBasin& b, const ScoreRun& r, const char* who) {
  const std::size_t n = b.thickness_m.size();
  const auto fail = [&](const std::string& why) {
    throw std::invalid_argument(std::string("score: ") + who + " run: " + why);
  };
  if (n == 0) fail("no layers in the basin");
  if (r.mean_psi.size() != n || r.mean_q.size() != n || r.wall_psi.size() != n) {
    fail("mean psi, mean q and wall values must have " + std::to_string(n) + " layers");
  }
  const Grid& g = b.grid;
  for (std::size_t k = 0; k < n; ++k) {
    for (const Field* f : {&r.mean_psi[k], &r.mean_q[k]}) {
      if (f->rows() != g.nx + 1 || f->cols() != g.ny + 1) {
        fail("layer " + std::to_string(k + 1) + " is not on the coarse grid of " +
             std::to_string(g.nx + 1) + " x " + std::to_string(g.ny + 1) + " nodes");
      }
    }
  }
  if (!r.pv_budget.empty() && r.pv_budget.size() != n) {
    fail("the PV budget fields must have one entry per layer");
  }
}

// The contour levels of one gyre: i / (n + 1) of the truth's |extremum|, and their spacing.
std::vector<double> contour_levels(double extremum, int n, double& spacing) {
  std::vector<double> levels;
  spacing = std::abs(extremum) / (n + 1);
  for (int i = 1; i <= n; ++i) levels.push_back(i * spacing);
  return levels;
}

double norm(const std::vector<double>& v) {
  double s = 0.0;
  for (const double x : v) s += x * x;
  return std::sqrt(s);
}

double mean(const std::vector<double>& v) {
  if (v.empty()) return 0.0;
  double s = 0.0;
  for (const double x : v) s += x;
  return s / static_cast<double>(v.size());
}

Metric undefined_metric(std::string id, Category c, std::string unit, std::string scale,
                        std::string note) {
  Metric m = make_metric(std::move(id), c, std::move(unit), std::nullopt, std::nullopt, 1.0,
                         std::move(scale));
  m.note = std::move(note);
  return m;
}

class CardBuilder {
 public:
  CardBuilder(const ScoreInput& in, Scorecard& card)
      : in_(in), card_(card), g_(in.basin.grid), spec_(in.options.spec) {}

  void plateau();
  void transport();
  void energy();
  void apriori();

 private:
  const ScoreInput& in_;
  Scorecard& card_;
  const Grid& g_;
  const ScoringSpec& spec_;

  void add(Metric m) { card_.metrics.push_back(std::move(m)); }
  void warn(std::string w) { card_.warnings.push_back(std::move(w)); }
  [[nodiscard]] std::vector<int> sheltered() const {
    return in_.basin.sheltered_layers.empty()
               ? default_sheltered_layers(static_cast<int>(in_.basin.thickness_m.size()))
               : in_.basin.sheltered_layers;
  }
  void gyre_plateau(int k, Gyre gyre);
  void contour_budget_metric(int k, Gyre gyre, const GyreRegion& region, const std::string& id);
};

void CardBuilder::gyre_plateau(int k, Gyre gyre) {
  const ScoreRun& t = in_.truth;
  const ScoreRun& c = in_.candidate;
  const double beta = in_.basin.beta;
  const double q_scale = beta * g_.ly_m;
  const std::string id = "plateau." + layer_label(k) + "." + gyre_name(gyre);
  const std::string where = layer_label(k) + " " + gyre_name(gyre) + " gyre";
  const GyreRegion region =
      gyre_region(g_, t.mean_psi[uz(k)], t.wall_psi[uz(k)], gyre, spec_.gyre_threshold);
  const std::string region_text =
      "G from the truth's mean psi - c at theta = " + num(spec_.gyre_threshold);
  const std::string abs_scale = "|c - t| (dimensionless)";
  const std::string q_scale_text = "|c - t| / (beta Ly), beta Ly = " + num(q_scale) + " s^-1";
  if (region.empty()) {
    const std::string note = "the truth has no " + where + " region";
    add(undefined_metric(id + ".homogeneity", Category::plateau, "1", abs_scale, note));
    add(undefined_metric(id + ".plateau_fraction", Category::plateau, "1", abs_scale, note));
    add(undefined_metric(id + ".plateau_overlap", Category::plateau, "1", "1 - IoU", note));
    add(undefined_metric(id + ".plateau_level", Category::plateau, "s^-1", q_scale_text, note));
    add(undefined_metric(id + ".q_psi_slope", Category::plateau, "1", abs_scale, note));
    warn(note + ": its plateau metrics score 0");
    return;
  }
  const Field& qt = t.mean_q[uz(k)];
  const Field& qc = c.mean_q[uz(k)];

  // Homogeneity.
  const double ht = homogeneity(g_, qt, region.mask, beta);
  const double hc = homogeneity(g_, qc, region.mask, beta);
  Metric h =
      make_metric(id + ".homogeneity", Category::plateau, "1", ht, hc, hc - ht,
                  abs_scale + "; homogeneity = 1 - std_G(q) / std_G(beta y), " + region_text);
  add(std::move(h));
  if (ht < in_.options.no_plateau_homogeneity) {
    warn("the truth shows no PV plateau in the " + where + " (homogeneity " + num(ht) + " < " +
         num(in_.options.no_plateau_homogeneity) + "): not a usable reference there");
  }

  // Plateau masks.
  const double max_grad = spec_.plateau_gradient_fraction * beta;
  const Mask pt = plateau_mask(g_, qt, region.mask, max_grad);
  const Mask pc = plateau_mask(g_, qc, region.mask, max_grad);
  const bool t_empty = pt.count() == 0;
  const bool c_empty = pc.count() == 0;
  std::string empty_note;
  if (t_empty && c_empty) {
    empty_note = "empty plateau mask (truth and candidate)";
  } else if (t_empty) {
    empty_note = "empty plateau mask (truth)";
  } else if (c_empty) {
    empty_note = "empty plateau mask (candidate)";
  }
  const std::string mask_text =
      "P = nodes of G with |grad q| < " + num(spec_.plateau_gradient_fraction) + " beta";
  const double ft = area_fraction(pt, region.mask);
  const double fc = area_fraction(pc, region.mask);
  Metric f = make_metric(id + ".plateau_fraction", Category::plateau, "1", ft, fc,
                         empty_note.empty() ? fc - ft : 1.0,
                         abs_scale + " of |P| / |G|; " + mask_text + "; an empty mask scores 0");
  f.note = empty_note;
  add(std::move(f));

  const double iou = overlap(pt, pc);
  Metric o = make_metric(id + ".plateau_overlap", Category::plateau, "1",
                         t_empty ? std::nullopt : std::optional<double>(1.0), iou,
                         empty_note.empty() ? 1.0 - iou : 1.0,
                         "1 - IoU of the truth's and candidate's masks P; an empty mask scores 0");
  o.note = empty_note;
  add(std::move(o));

  const std::optional<double> lt = mean_over(qt, pt);
  const std::optional<double> lc = mean_over(qc, pc);
  Metric l = make_metric(id + ".plateau_level", Category::plateau, "s^-1", lt, lc,
                         (lt && lc) ? (*lc - *lt) / q_scale : 1.0,
                         q_scale_text +
                             " of the mean q over each run's own P; an empty mask "
                             "scores 0");
  l.note = empty_note;
  add(std::move(l));

  // q-psi slope.
  const double st = q_psi_slope(g_, qt, t.mean_psi[uz(k)], region.mask, beta);
  const double sc = q_psi_slope(g_, qc, c.mean_psi[uz(k)], region.mask, beta);
  add(make_metric(id + ".q_psi_slope", Category::plateau, "1", st, sc, sc - st,
                  abs_scale + "; slope = (dq/dpsi least squares over G) * (psi range of G) / "
                              "(beta * meridional extent of G)"));

  if (!t.pv_budget.empty() && !c.pv_budget.empty()) {
    contour_budget_metric(k, gyre, region, id);
  }
}

void CardBuilder::contour_budget_metric(int k, Gyre gyre, const GyreRegion& region,
                                        const std::string& id) {
  const ScoreRun& t = in_.truth;
  const ScoreRun& c = in_.candidate;
  double spacing = 0.0;
  const std::vector<double> levels =
      contour_levels(region.extremum.value, in_.options.contour_levels, spacing);
  const ContourBudget bt =
      contour_budget(g_, t.mean_psi[uz(k)], t.wall_psi[uz(k)], gyre, t.pv_budget[uz(k)], levels);
  const ContourBudget bc =
      contour_budget(g_, c.mean_psi[uz(k)], c.wall_psi[uz(k)], gyre, c.pv_budget[uz(k)], levels);
  Metric m = make_metric(id + ".contour_outflow", Category::plateau, "m^2 s^-2", norm(bt.outflow),
                         norm(bc.outflow), relative_profile_error(bt.outflow, bc.outflow),
                         "||out_c - out_t||_2 / ||out_t||_2 over the closed-contour levels "
                         "s (psi - c) > psi_c (each run's own contours; the values are the "
                         "profiles' norms, the profiles are in the card)");
  m.level_unit = "m^2 s^-1";
  m.levels = levels;
  m.profiles = {{"area_m2", bt.area, bc.area},       {"outflow", bt.outflow, bc.outflow},
                {"forcing", bt.forcing, bc.forcing}, {"friction", bt.friction, bc.friction},
                {"storage", bt.storage, bc.storage}, {"residual", bt.residual, bc.residual}};
  add(std::move(m));
}

void CardBuilder::plateau() {
  for (const int k : sheltered()) {
    if (k < 0 || uz(k) >= in_.basin.thickness_m.size()) {
      throw std::invalid_argument("score: sheltered layer " + std::to_string(k + 1) +
                                  " does not exist");
    }
    for (const Gyre gyre : in_.basin.gyres) gyre_plateau(k, gyre);
    const double q_scale = in_.basin.beta * g_.ly_m;
    const double rms = rms_difference(g_, in_.candidate.mean_q[uz(k)], in_.truth.mean_q[uz(k)]);
    add(make_metric(
        "plateau." + layer_label(k) + ".rms_q", Category::plateau, "s^-1", 0.0, rms, rms / q_scale,
        "RMS over the interior nodes of (q_c - q_t), / (beta Ly), beta Ly = " + num(q_scale) +
            " s^-1"));
  }
}

void CardBuilder::transport() {
  const ScoreRun& t = in_.truth;
  const ScoreRun& c = in_.candidate;
  const std::vector<double>& h = in_.basin.thickness_m;
  const Field tt = barotropic_transport(t.mean_psi, t.wall_psi, h);
  const Field tc = barotropic_transport(c.mean_psi, c.wall_psi, h);
  const std::string rel = "relative error |c - t| / |t|";
  for (const Gyre gyre : in_.basin.gyres) {
    const double et = gyre_extremum(g_, tt, 0.0, gyre).value / kSverdrup;
    const double ec = gyre_extremum(g_, tc, 0.0, gyre).value / kSverdrup;
    const std::string id =
        gyre == Gyre::anticyclonic ? "transport.barotropic.max_sv" : "transport.barotropic.min_sv";
    add(make_metric(id, Category::transport, "Sv", et, ec, relative_error(et, ec),
                    rel + " of the extremum of sum_k H_k (psi_k - c_k)"));
  }
  for (int k = 0; uz(k) < h.size(); ++k) {
    for (const Gyre gyre : in_.basin.gyres) {
      const double et = h[uz(k)] *
                        gyre_extremum(g_, t.mean_psi[uz(k)], t.wall_psi[uz(k)], gyre).value /
                        kSverdrup;
      const double ec = h[uz(k)] *
                        gyre_extremum(g_, c.mean_psi[uz(k)], c.wall_psi[uz(k)], gyre).value /
                        kSverdrup;
      add(make_metric("transport." + layer_label(k) + "." + gyre_name(gyre) + ".sv",
                      Category::transport, "Sv", et, ec, relative_error(et, ec),
                      rel + " of H_k times the extremum of psi_k - c_k"));
    }
  }
  for (const Gyre gyre : in_.basin.gyres) {
    const double wt = western_boundary_transport(g_, tt, gyre) / kSverdrup;
    const double wc = western_boundary_transport(g_, tc, gyre) / kSverdrup;
    add(make_metric("transport.wbc." + gyre_name(gyre) + ".sv", Category::transport, "Sv", wt, wc,
                    relative_error(wt, wc),
                    rel + " of the barotropic transport at its first extremum east of the "
                          "western wall, on the row of each run's gyre extremum"));
  }
  bool anti = false;
  bool cyc = false;
  for (const Gyre gyre : in_.basin.gyres) (gyre == Gyre::anticyclonic ? anti : cyc) = true;
  if (anti && cyc) {
    const double jt = jet_penetration(g_, tt, t.mean_psi.front(), spec_.jet_fraction) / 1e3;
    const double jc = jet_penetration(g_, tc, c.mean_psi.front(), spec_.jet_fraction) / 1e3;
    add(make_metric("transport.jet.penetration_km", Category::transport, "km", jt, jc,
                    relative_error(jt, jc),
                    rel +
                        "; eastward distance along the row of zero mean barotropic transport "
                        "over which the top-layer u stays above " +
                        num(spec_.jet_fraction) + " of its maximum"));
  }
}

void CardBuilder::energy() {
  const ScoreRun& t = in_.truth;
  const ScoreRun& c = in_.candidate;
  const std::string rel = "relative error |c - t| / |t|";
  const std::string e_unit = "m^5 s^-2";
  const std::string p_unit = "m^5 s^-3";
  const std::string where = t.energy_note.empty() && c.energy_note.empty()
                                ? std::string()
                                : "; truth: " + t.energy_note + "; candidate: " + c.energy_note;
  if (!t.mean_energy.kinetic.empty() && !c.mean_energy.kinetic.empty()) {
    for (std::size_t k = 0; k < t.mean_energy.kinetic.size() && k < c.mean_energy.kinetic.size();
         ++k) {
      const double et = t.mean_energy.kinetic[k];
      const double ec = c.mean_energy.kinetic[k];
      add(make_metric("energy.L" + std::to_string(k + 1) + ".kinetic", Category::energy, e_unit, et,
                      ec, relative_error(et, ec), rel + " of the time-mean KE" + where));
    }
    for (std::size_t k = 0;
         k < t.mean_energy.potential.size() && k < c.mean_energy.potential.size(); ++k) {
      const double et = t.mean_energy.potential[k];
      const double ec = c.mean_energy.potential[k];
      add(make_metric("energy.I" + std::to_string(k + 1) + ".potential", Category::energy, e_unit,
                      et, ec, relative_error(et, ec),
                      rel + " of the time-mean APE of the interface below layer " +
                          std::to_string(k + 1) + where));
    }
    const EnergySplit st = energy_split(t.mean_energy, t.mean_state_energy);
    const EnergySplit sc = energy_split(c.mean_energy, c.mean_state_energy);
    add(make_metric("energy.total", Category::energy, e_unit, st.total, sc.total,
                    relative_error(st.total, sc.total), rel + " of the time-mean total energy"));
    add(make_metric("energy.mean_flow", Category::energy, e_unit, st.mean_flow, sc.mean_flow,
                    relative_error(st.mean_flow, sc.mean_flow),
                    rel + " of the energy of the time-mean state"));
    Metric eddy = make_metric("energy.eddy", Category::energy, e_unit, st.eddy, sc.eddy,
                              relative_error(st.eddy, sc.eddy),
                              rel + "; eddy = time-mean total - energy of the mean state");
    eddy.scored = false;
    eddy.note =
        "reported only: the candidate's value is the transient energy the coarse run "
        "resolves, which a closure does not aim to reproduce";
    add(std::move(eddy));
  }

  if (t.budget.window_s > 0.0 && c.budget.window_s > 0.0) {
    const BudgetPowers pt = budget_powers(t.budget);
    const BudgetPowers pc = budget_powers(c.budget);
    const std::string mean_power = rel + " of the time-mean power over the window";
    add(make_metric("energy.budget.wind", Category::energy, p_unit, pt.terms.wind, pc.terms.wind,
                    relative_error(pt.terms.wind, pc.terms.wind), mean_power));
    add(make_metric("energy.budget.bottom_drag", Category::energy, p_unit, pt.terms.bottom_drag,
                    pc.terms.bottom_drag,
                    relative_error(pt.terms.bottom_drag, pc.terms.bottom_drag), mean_power));
    Metric lf = make_metric("energy.budget.lateral_friction", Category::energy, p_unit,
                            pt.terms.lateral_friction, pc.terms.lateral_friction,
                            relative_error(pt.terms.lateral_friction, pc.terms.lateral_friction),
                            mean_power);
    lf.scored = false;
    lf.note = "reported only: each grid has its own viscosity";
    add(std::move(lf));
    Metric cl = make_metric("energy.budget.closure", Category::energy, p_unit, pt.closure,
                            pc.closure, relative_error(pt.closure, pc.closure), mean_power);
    cl.scored = false;
    cl.note = "reported only: the truth resolves its eddies instead";
    add(std::move(cl));
    const auto frac = [](const BudgetPowers& p) {
      return p.terms.wind != 0.0 ? p.residual / std::abs(p.terms.wind) : p.residual;
    };
    const double rt = frac(pt);
    const double rc = frac(pc);
    Metric r = make_metric("energy.budget.residual", Category::energy, "1", rt, rc, rc - rt,
                           "|c - t| of (storage - sum of the terms) / |wind power| per run");
    r.scored = false;
    r.note = "reported only: a check of each run's budget closure (time stepping)";
    add(std::move(r));
  }

  const double limit = spec_.energy_trend_fraction;
  const EnergyTrend tt = energy_trend(t.series_t_s, t.series_total, t.window_start_s, limit);
  const EnergyTrend tc = energy_trend(c.series_t_s, c.series_total, c.window_start_s, limit);
  if (tt.samples > 0 || tc.samples > 0) {
    Metric m = make_metric("energy.trend", Category::energy, "1", tt.fraction, tc.fraction,
                           tc.fraction - tt.fraction,
                           "|c - t| of |linear trend of total energy| * window / mean energy");
    m.scored = false;
    m.note = "reported only: an equilibration check, warned above " + num(limit);
    add(std::move(m));
    for (const auto& [who, tr] : {std::pair<const char*, const EnergyTrend&>{"truth", tt},
                                  std::pair<const char*, const EnergyTrend&>{"candidate", tc}}) {
      if (tr.warn) {
        warn(std::string(who) +
             " run not equilibrated: the linear trend of total energy over "
             "the averaging window is " +
             num(100.0 * tr.fraction) + "% of its mean (limit " + num(100.0 * limit) + "%)");
      }
    }
  }
  const double crossing = rossby_crossing_time(g_.lx_m, in_.basin.beta, in_.basin.ld1_m);
  if (crossing > 0.0) {
    for (const auto& [who, run] : {std::pair<const char*, const ScoreRun&>{"truth", t},
                                   std::pair<const char*, const ScoreRun&>{"candidate", c}}) {
      if (run.window_start_s < in_.options.spinup_crossings * crossing) {
        warn(std::string(who) + " spin-up " + num(run.window_start_s / 86400.0) +
             " days is shorter than " + num(in_.options.spinup_crossings) +
             " baroclinic Rossby-wave crossing times Lx/(beta Ld1^2) = " + num(crossing / 86400.0) +
             " days each");
      }
    }
  }
}

void CardBuilder::apriori() {
  if (!in_.apriori) return;
  const AprioriFields& a = *in_.apriori;
  const std::size_t n = in_.basin.thickness_m.size();
  for (const auto* v : {&a.truth_tendency, &a.closure_tendency, &a.truth_fx, &a.truth_fy,
                        &a.closure_fx, &a.closure_fy}) {
    if (v->size() != n) {
      throw std::invalid_argument("score: a priori fields must have " + std::to_string(n) +
                                  " layers");
    }
  }
  card_.apriori_target = apriori_target_name(a.target);
  const ScoreRun& t = in_.truth;
  const double max_grad = spec_.plateau_gradient_fraction * in_.basin.beta;
  const std::vector<int> shelter = sheltered();
  for (int k = 0; uz(k) < n; ++k) {
    const std::string id = "a_priori." + layer_label(k);
    const TendencyRegression r =
        tendency_regression(g_, a.truth_tendency[uz(k)], a.closure_tendency[uz(k)]);
    add(make_metric(id + ".correlation", Category::a_priori, "1", 1.0, r.correlation,
                    1.0 - r.correlation,
                    "1 - Pearson correlation of the closure's tendency with the truth's eddy "
                    "forcing (0 for a uniform tendency, as for `none`)"));
    add(make_metric(id + ".slope", Category::a_priori, "1", 1.0, r.slope, r.slope - 1.0,
                    "|slope - 1|, least-squares slope of the closure's tendency on the truth's"));
    const KeffMap kt = k_eff(g_, a.truth_fx[uz(k)], a.truth_fy[uz(k)], t.mean_q[uz(k)], max_grad);
    const KeffMap kc =
        k_eff(g_, a.closure_fx[uz(k)], a.closure_fy[uz(k)], t.mean_q[uz(k)], max_grad);
    Metric km =
        make_metric(id + ".k_eff_median", Category::a_priori, "m^2 s^-1", kt.median, kc.median,
                    (kt.median && kc.median) ? relative_error(*kt.median, *kc.median) : 1.0,
                    "relative error |c - t| / |t| of the median of K_eff = -F.grad q / "
                    "|grad q|^2 where |grad q| > " +
                        num(spec_.plateau_gradient_fraction) + " beta");
    if (!kt.median) km.note = "no node with |grad q| above the threshold";
    add(std::move(km));

    bool is_sheltered = false;
    for (const int s : shelter) is_sheltered = is_sheltered || s == k;
    if (!is_sheltered) continue;
    for (const Gyre gyre : in_.basin.gyres) {
      const GyreRegion region =
          gyre_region(g_, t.mean_psi[uz(k)], t.wall_psi[uz(k)], gyre, spec_.gyre_threshold);
      if (!region.extremum.found) continue;
      double spacing = 0.0;
      const std::vector<double> levels =
          contour_levels(region.extremum.value, in_.options.contour_levels, spacing);
      const Field div_t = -a.truth_tendency[uz(k)];
      const Field div_c = -a.closure_tendency[uz(k)];
      const ContourDiffusivity ct = contour_diffusivity(g_, t.mean_psi[uz(k)], t.wall_psi[uz(k)],
                                                        gyre, div_t, t.mean_q[uz(k)], levels);
      const ContourDiffusivity cc = contour_diffusivity(g_, t.mean_psi[uz(k)], t.wall_psi[uz(k)],
                                                        gyre, div_c, t.mean_q[uz(k)], levels);
      Metric m = make_metric(id + "." + gyre_name(gyre) + ".k_contour", Category::a_priori,
                             "m^2 s^-1", mean(ct.k), mean(cc.k), relative_profile_error(ct.k, cc.k),
                             "||K_c - K_t||_2 / ||K_t||_2 of K(psi) = -(flux of F out of the "
                             "contour) / (integral of |grad q| along it) over the truth's "
                             "closed mean-psi contours (values: the profiles' means)");
      m.level_unit = "m^2 s^-1";
      m.levels = levels;
      m.profiles = {{"k", ct.k, cc.k}, {"outflow", ct.outflow, cc.outflow}};
      add(std::move(m));
    }
  }
}

}  // namespace

std::vector<int> default_sheltered_layers(int layers) {
  std::vector<int> out;
  const int last = layers >= 3 ? layers - 2 : layers - 1;
  for (int k = 1; k <= last; ++k) out.push_back(k);
  return out;
}

AprioriTarget resolve_apriori_target(AprioriTarget requested, double coarse_dx_m, double ld1_m) {
  if (requested != AprioriTarget::automatic) return requested;
  return coarse_dx_m > 0.5 * ld1_m ? AprioriTarget::transient_subfilter : AprioriTarget::subfilter;
}

std::string apriori_target_name(AprioriTarget t) {
  switch (t) {
    case AprioriTarget::automatic:
      return "automatic";
    case AprioriTarget::subfilter:
      return "subfilter";
    case AprioriTarget::transient_subfilter:
      return "transient_subfilter";
  }
  return "unknown";
}

Scorecard score(const ScoreInput& in) {
  check_run(in.basin, in.truth, "truth");
  check_run(in.basin, in.candidate, "candidate");
  if (!(in.basin.beta > 0.0)) throw std::invalid_argument("score: beta must be positive");
  Scorecard card;
  card.case_name = in.case_name;
  card.closure = in.closure;
  const ScoringSpec& s = in.options.spec;
  card.weights = {s.weight_plateau, s.weight_transport, s.weight_energy, s.weight_a_priori};
  card.timing = in.timing;
  CardBuilder b(in, card);
  b.plateau();
  b.transport();
  b.energy();
  b.apriori();
  return card;
}

}  // namespace plateau
