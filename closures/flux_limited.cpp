// flux_limited: a down-gradient flux, then limited (CLOSURES.md, family 4).
//
//   base flux   F = -K grad q~ with K constant (k_m2_per_s) or Eady-scaled (alpha L^2 sigma_j,
//               as the `eady` closure), on the stretching part (layered Gent-McWilliams form,
//               K on the interfaces) or the full PV (K per layer, wall taper); full-PV
//               diffusion with a K that differs between layers does not conserve momentum.
//   (a) cauchy_schwarz: |F| <= c u_e q_e on every face, q_e = L |grad q~| a mixing-length eddy
//               PV and u_e the declared eddy velocity or sqrt(2 E / H) from a prognostic eddy
//               energy E; this is the bound |<u'q'>| <= u_rms q_rms of the Cauchy-Schwarz
//               inequality with c <= 1, and it caps the diffusivity at c u_e L.
//   (b) zalesak: a monotone flux-corrected limiter (Zalesak 1979, J. Comput. Phys. 31) with a
//               zero low-order flux, so that the step creates no new extremum of q~: each node
//               stays within the range of itself and its interior neighbours before the step.
// Either can be switched off. For the stretching target one factor per face scales every
// layer (the smallest of the layers'), which keeps sum_k H_k F_k = 0 and the sign of the
// energy exchange; for the full PV each layer has its own.
//
// With u_e_source = eddy_energy, E is prognostic as in the `eddy_energy` closure (Marshall,
// Maddison and Berloff 2012, J. Phys. Oceanogr. 42): fed by exactly the energy the applied,
// limited fluxes take from the resolved flow, damped at lambda, diffused, advected by the
// barotropic flow, E >= 0.

#include <algorithm>
#include <cmath>
#include <memory>
#include <utility>

#include "closures/closure.hpp"
#include "closures/flux_kit.hpp"

namespace plateau::closure {
namespace {

using kit::uz;

enum class Base { constant, eady };

class FluxLimitedClosure final : public Closure {
 public:
  FluxLimitedClosure(const Params& p, const Setup& s)
      : setup_(s),
        target_(kit::target_of(p)),
        base_(p.choice("base") == "eady" ? Base::eady : Base::constant),
        k_(p.real("k_m2_per_s")),
        cap_(p.real("k_max_m2_per_s")),
        bound_(p.flag("cauchy_schwarz")),
        monotone_(p.flag("zalesak")),
        prognostic_e_(p.choice("u_e_source") == "eddy_energy"),
        u_e_(p.real("u_e_m_per_s")),
        e0_(p.real("e0_m3_per_s2")) {
    const double l = kit::mixing_length(s, kit::mixing_length_of(p.choice("mixing_length")),
                                        p.real("length_km") * kit::kMetresPerKm, u_e_);
    length_ = l;
    alpha_l2_ = p.real("alpha") * l * l;
    c_length_ = p.real("c_bound") * l;
    rates_.lambda_per_s = p.real("lambda_per_day") / kit::kSecondsPerDay;
    rates_.kappa_m2_per_s = p.real("kappa_e_m2_per_s");
    const bool full = target_ == Target::full_pv;
    if (full) {
      taper_ = kit::make_taper(s, kit::taper_width(s, p.real("taper_km") * kit::kMetresPerKm));
    }
    Field nodes = s.nodes();
    nodes.setConstant(k_);
    kit::to_faces(s, nodes, full ? &taper_ : nullptr, kx_, ky_);
    nodes.setConstant(u_e_);
    kit::to_faces(s, nodes, nullptr, ux_, uy_);
    kx_capped_ = kx_;
    ky_capped_ = ky_;
    kit::cap_faces(s, ux_, uy_, c_length_, kx_capped_, ky_capped_);
  }

  [[nodiscard]] Target target() const override { return target_; }
  [[nodiscard]] double diffusivity_bound() const override {
    return base_ == Base::constant ? k_ : cap_;
  }
  [[nodiscard]] double wall_taper_width_m() const override { return taper_.width_m; }

  void fluxes(const StateView& s, double dt_s, Fluxes& out, Scratch& scratch) const override {
    const int n = setup_.layers();
    const int ni = setup_.interfaces();
    const auto r = setup_.nx + 1;
    const auto c = setup_.ny + 1;
    // The diffused quantity.
    std::span<const Field> qt = s.q;
    if (target_ == Target::stretching) {
      const std::span<Field> st = scratch.group(kQtGroup, uz(n), r, c);
      for (int k = 0; k < n; ++k) kit::stretching_pv(setup_, s.psi, k, st[uz(k)]);
      qt = st;
    }
    // u_e on the faces: declared, or sqrt(2 E / H) with E at a face the mean of its two nodes.
    const Field* ux = &ux_;
    const Field* uy = &uy_;
    if (bound_ && prognostic_e_) {
      Field& fx = scratch.get(kUeX, setup_.nx, setup_.ny + 1);
      Field& fy = scratch.get(kUeY, setup_.nx + 1, setup_.ny);
      kit::eddy_velocity_faces(setup_, s.prognostic.front(), 2.0 / setup_.total_depth(), fx, fy);
      ux = &fx;
      uy = &fy;
    }
    // (a) Where each layer's face flux is -K g~ with one K (the full PV; the stretching flux
    // with one interface, or one K on every interface), |F| <= c u_e L |g~| is exactly
    // K <= c u_e L on that face: the bound is applied as a cap on the face K, in one pass.
    const bool cap_k = bound_ && (target_ == Target::full_pv || ni <= 1 || base_ == Base::constant);
    Field& kx = scratch.get(kFaceX, setup_.nx, setup_.ny + 1);
    Field& ky = scratch.get(kFaceY, setup_.nx + 1, setup_.ny);
    auto capped = [&](const Field& kx0, const Field& ky0) -> std::pair<const Field*, const Field*> {
      if (!cap_k) return {&kx0, &ky0};
      if (&kx0 != &kx) {
        kx = kx0;
        ky = ky0;
      }
      kit::cap_faces(setup_, *ux, *uy, c_length_, kx, ky);
      return {&kx, &ky};
    };
    // The base flux.
    if (base_ == Base::constant) {
      const auto [fkx, fky] =
          cap_k && !prognostic_e_ ? std::pair{&kx_capped_, &ky_capped_} : capped(kx_, ky_);
      if (target_ == Target::stretching) {
        kit::stretching_flux(setup_, s.psi, {fkx, 1}, {fky, 1}, out);
      } else {
        for (int k = 0; k < n; ++k) {
          kit::full_pv_flux(setup_, qt[uz(k)], *fkx, *fky, out.fx[uz(k)], out.fy[uz(k)]);
        }
      }
      out.k_max = k_;
    } else {
      const std::span<Field> kj = scratch.group(kKGroup, uz(ni), r, c);
      double kmax = 0.0;
      for (int j = 0; j < ni; ++j) {
        kmax = std::max(kmax, kit::eady_diffusivity(setup_, s.psi, j, alpha_l2_, cap_, kj[uz(j)]));
      }
      if (target_ == Target::stretching) {
        for (int j = 0; j < ni; ++j) {
          kit::to_faces(setup_, kj[uz(j)], nullptr, kx, ky);
          const auto [fkx, fky] = capped(kx, ky);
          kit::add_interface_flux(setup_, s.psi, j, *fkx, *fky, out);
        }
      } else if (ni > 0) {
        Field& kl = scratch.get(kLayer, r, c);
        for (int k = 0; k < n; ++k) {
          kit::layer_diffusivity(setup_, kj, k, kl);
          kit::to_faces(setup_, kl, &taper_, kx, ky);
          const auto [fkx, fky] = capped(kx, ky);
          kit::full_pv_flux(setup_, qt[uz(k)], *fkx, *fky, out.fx[uz(k)], out.fy[uz(k)]);
        }
      }
      out.k_max = kmax;
    }
    const bool common = target_ == Target::stretching;
    if (bound_ && !cap_k) {
      kit::cauchy_schwarz_limit(setup_, qt, *ux, *uy, c_length_, common, out, scratch, kBound);
    }
    if (monotone_) kit::zalesak_limit(setup_, qt, dt_s, common, out, scratch, kZalesak);
  }

  [[nodiscard]] std::vector<FieldInfo> prognostic_fields() const override {
    if (!prognostic_e_) return {};
    return {{"eddy_energy", "m3 s-2",
             "depth-integrated eddy energy E of the closure (gives u_e = sqrt(2E/H))",
             Placement::column}};
  }
  void initial_prognostic(std::span<Field> fields) const override {
    if (!prognostic_e_) return;
    Field& e = fields.front();
    e = setup_.nodes();
    e.block(1, 1, setup_.nx - 1, setup_.ny - 1).setConstant(e0_);
  }
  void step_prognostic(const StateView& frozen, const Fluxes& applied, double dt_s,
                       std::span<Field> fields, Scratch& scratch) const override {
    if (!prognostic_e_) return;
    Field& src = scratch.get(kSource, setup_.nx + 1, setup_.ny + 1);
    kit::energy_conversion(setup_, frozen.psi, applied, src, scratch, kConversion);
    kit::step_eddy_energy(setup_, frozen.psi, frozen.wall_psi, src, dt_s, rates_, fields.front(),
                          scratch, kEnergyStep);
  }

  [[nodiscard]] std::vector<FieldInfo> diagnostic_fields() const override {
    std::vector<FieldInfo> d;
    d.push_back({"closure_k", "m2 s-1", "diffusivity of the base flux, before the limiters",
                 target_ == Target::stretching ? Placement::interface : Placement::layer});
    d.push_back({"closure_pv_flux_magnitude", "m s-2",
                 "magnitude of the limited PV flux at the nodes (mean of the adjacent faces)",
                 Placement::layer});
    return d;
  }
  void diagnostics(const StateView& s, const Fluxes& applied, std::span<Field> out,
                   Scratch& scratch) const override {
    const int n = setup_.layers();
    const int ni = setup_.interfaces();
    const auto r = setup_.nx + 1;
    const auto c = setup_.ny + 1;
    const int nk = target_ == Target::stretching ? ni : n;
    for (Field& f : out) f.setZero();
    auto inner = [&](Field& f) { return f.block(1, 1, setup_.nx - 1, setup_.ny - 1); };
    if (base_ == Base::constant) {
      for (int k = 0; k < nk; ++k) {
        for (int j = 1; j < setup_.ny; ++j) {
          for (int i = 1; i < setup_.nx; ++i) {
            const double w =
                target_ == Target::full_pv ? taper_.x_node[uz(i)] * taper_.y_node[uz(j)] : 1.0;
            out[uz(k)](i, j) = k_ * w;
          }
        }
      }
    } else {
      const std::span<Field> kj = scratch.group(kKGroup, uz(ni), r, c);
      for (int j = 0; j < ni; ++j) {
        kit::eady_diffusivity(setup_, s.psi, j, alpha_l2_, cap_, kj[uz(j)]);
      }
      for (int k = 0; k < nk; ++k) {
        if (target_ == Target::stretching) {
          inner(out[uz(k)]) = inner(kj[uz(k)]);
        } else {
          kit::layer_diffusivity(setup_, kj, k, out[uz(k)]);
          for (int j = 0; j <= setup_.ny; ++j) {
            for (int i = 0; i <= setup_.nx; ++i) {
              out[uz(k)](i, j) *= taper_.x_node[uz(i)] * taper_.y_node[uz(j)];
            }
          }
        }
      }
    }
    for (int k = 0; k < n; ++k) {
      Field& m = out[uz(nk + k)];
      const Field& fx = applied.fx[uz(k)];
      const Field& fy = applied.fy[uz(k)];
      for (int j = 1; j < setup_.ny; ++j) {
        for (int i = 1; i < setup_.nx; ++i) {
          const double ax = 0.5 * (fx(i - 1, j) + fx(i, j));
          const double ay = 0.5 * (fy(i, j - 1) + fy(i, j));
          m(i, j) = std::sqrt(ax * ax + ay * ay);
        }
      }
    }
  }

  [[nodiscard]] double mixing_length_m() const { return length_; }

 private:
  enum Slot : std::size_t {
    kFaceX = 0,
    kFaceY,
    kLayer,
    kUeX,
    kUeY,
    kSource,
    kConversion,                    // 2 slots
    kEnergyStep = kConversion + 2,  // 6 slots
    kBound = kEnergyStep + 6,       // 2 slots
    kZalesak = kBound + 2,          // 2 per layer + 3
  };
  static constexpr std::size_t kQtGroup = 0;
  static constexpr std::size_t kKGroup = 1;

  Setup setup_;
  Target target_;
  Base base_;
  double k_;
  double cap_;
  bool bound_;
  bool monotone_;
  bool prognostic_e_;
  double u_e_;
  double e0_;
  double length_ = 0.0;
  double alpha_l2_ = 0.0;
  double c_length_ = 0.0;
  kit::EddyEnergyRates rates_;
  kit::Taper taper_;
  Field kx_;
  Field ky_;
  Field ux_;
  Field uy_;
  Field kx_capped_;  // min(K w, c u_e L): the constant base with the bound, declared u_e
  Field ky_capped_;
};

const Registrar kRegisterFluxLimited{Info{
    "flux_limited",
    "F = -K grad q~ (K constant or Eady), then |F| <= c u_e L |grad q~| and a monotone "
    "(no new extremum) limiter",
    "Cauchy-Schwarz bound |<u'q'>| <= u_rms q_rms; Zalesak (1979), J. Comput. Phys. 31",
    {Param::choice("base", {"constant", "eady"}, "constant",
                   "base diffusivity: k_m2_per_s, or alpha L^2 sigma_j as the eady closure"),
     kit::target_param("stretching"),
     Param::real("k_m2_per_s", "m2 s-1", 500.0, 1.0, 1e5, "K of the constant base").tunable(true),
     Param::real("alpha", "1", 0.015, 1e-4, 1.0, "alpha of the eady base").tunable(true),
     kit::mixing_length_param(), kit::length_param(),
     Param::boolean("cauchy_schwarz", true, "apply the bound |F| <= c u_e L |grad q~|"),
     Param::real("c_bound", "1", 1.0, 0.0, 1.0, "c of the bound (a correlation, <= 1)")
         .open_min()
         .tunable(),
     Param::choice("u_e_source", {"declared", "eddy_energy"}, "declared",
                   "eddy velocity of the bound: u_e_m_per_s, or sqrt(2E/H) from a prognostic "
                   "eddy energy E"),
     kit::eddy_velocity_param(),
     Param::boolean("zalesak", true, "apply the monotone limiter (no new extremum of q~)"),
     Param::real("k_max_m2_per_s", "m2 s-1", 1e4, 1.0, 1e6, "cap on the eady base's K"),
     kit::taper_param(),
     Param::real("lambda_per_day", "day-1", 0.01, 0.0, 1.0,
                 "u_e_source = eddy_energy: damping rate of E"),
     Param::real("kappa_e_m2_per_s", "m2 s-1", 500.0, 0.0, 1e5,
                 "u_e_source = eddy_energy: diffusivity of E"),
     Param::real("e0_m3_per_s2", "m3 s-2", 1.0, 1e-6, 1e4,
                 "u_e_source = eddy_energy: initial E (uniform, > 0)")},
    true,
    [](const Params& p, const Setup& s) -> std::unique_ptr<Closure> {
      return std::make_unique<FluxLimitedClosure>(p, s);
    }}};

}  // namespace
}  // namespace plateau::closure
