// eady: a diffusivity set by the local baroclinic growth rate (CLOSURES.md, family 3, shear
// scaling), after Visbeck, Marshall, Haine and Spall (1997), J. Phys. Oceanogr. 27 (from
// memory):
//
//   K_j = min(alpha L^2 sigma_j, k_max),  sigma_j = f0 |u_j - u_{j+1}| / sqrt(g'_j h_j)
//
// per interface j, with u_j - u_{j+1} the vector difference of the layer velocities
// (|grad(psi_j - psi_{j+1})|, centred differences at the nodes), h_j the mean of the two layer
// thicknesses, and L the mixing length: a fixed length, the first deformation radius Ld1, or
// min(Ld1, sqrt(U_e/beta)). alpha near 0.015 is the value Visbeck et al. report for a mixing
// length equal to the baroclinic zone's width; with L = Ld1 it must be re-tuned (`tune`).
//
//   stretching (default): the layered Gent-McWilliams flux with K_j on interface j (momentum
//     conserving, energy tendency -sum_j (f0^2/g'_j) integral K_j |grad(psi_j - psi_{j+1})|^2).
//   full_pv: F_k = -K_k w grad q_k, K_k the mean of the interface values above and below layer
//     k, w the wall taper. Full-PV diffusion with a K that differs between layers, as here, does
//     not conserve momentum.
//
// K at a face is the mean of its two nodes. One layer has no interface: K = 0.

#include <algorithm>
#include <memory>

#include "closures/closure.hpp"
#include "closures/flux_kit.hpp"

namespace plateau::closure {
namespace {

using kit::uz;

class EadyClosure final : public Closure {
 public:
  EadyClosure(const Params& p, const Setup& s)
      : setup_(s), target_(kit::target_of(p)), cap_(p.real("k_max_m2_per_s")) {
    const double l =
        kit::mixing_length(s, kit::mixing_length_of(p.choice("mixing_length")),
                           p.real("length_km") * kit::kMetresPerKm, p.real("u_e_m_per_s"));
    alpha_l2_ = p.real("alpha") * l * l;
    if (target_ == Target::full_pv) {
      taper_ = kit::make_taper(s, kit::taper_width(s, p.real("taper_km") * kit::kMetresPerKm));
    }
  }

  [[nodiscard]] Target target() const override { return target_; }
  [[nodiscard]] double diffusivity_bound() const override { return cap_; }
  [[nodiscard]] double wall_taper_width_m() const override { return taper_.width_m; }

  void fluxes(const StateView& s, double /*dt_s*/, Fluxes& out, Scratch& scratch) const override {
    const int ni = setup_.interfaces();
    const std::span<Field> kj = interface_k(s, scratch);
    double kmax = 0.0;
    for (const Field& k : kj) {
      kmax = std::max(kmax, k.block(1, 1, setup_.nx - 1, setup_.ny - 1).maxCoeff());
    }
    Field& kx = scratch.get(kFaceX, setup_.nx, setup_.ny + 1);
    Field& ky = scratch.get(kFaceY, setup_.nx + 1, setup_.ny);
    if (target_ == Target::stretching) {
      for (int j = 0; j < ni; ++j) {
        kit::to_faces(setup_, kj[uz(j)], nullptr, kx, ky);
        kit::add_interface_flux(setup_, s.psi, j, kx, ky, out);
      }
    } else if (ni > 0) {
      Field& kl = scratch.get(kLayer, setup_.nx + 1, setup_.ny + 1);
      for (int k = 0; k < setup_.layers(); ++k) {
        kit::layer_diffusivity(setup_, kj, k, kl);
        kit::to_faces(setup_, kl, &taper_, kx, ky);
        kit::full_pv_flux(setup_, s.q[uz(k)], kx, ky, out.fx[uz(k)], out.fy[uz(k)]);
      }
    }
    out.k_max = kmax;
  }

  [[nodiscard]] std::vector<FieldInfo> diagnostic_fields() const override {
    if (target_ == Target::stretching) {
      return {{"closure_k", "m2 s-1", "Eady-scaled interface diffusivity K_j = alpha L^2 sigma_j",
               Placement::interface},
              {"closure_growth_rate", "s-1", "Eady growth rate sigma_j of the interface",
               Placement::interface}};
    }
    return {{"closure_k", "m2 s-1", "Eady-scaled layer diffusivity (wall taper applied)",
             Placement::layer}};
  }
  void diagnostics(const StateView& s, const Fluxes& /*applied*/, std::span<Field> out,
                   Scratch& scratch) const override {
    const int ni = setup_.interfaces();
    const std::span<Field> kj = interface_k(s, scratch);
    if (target_ == Target::stretching) {
      for (int j = 0; j < ni; ++j) {
        out[uz(j)] = kj[uz(j)];
        Field& g = out[uz(ni + j)];
        kit::shear_speed(setup_, s.psi, j, g);
        g *= setup_.f0 / std::sqrt(setup_.gprime(j) * setup_.h_interface(j));
        zero_walls(g);
      }
      return;
    }
    for (int k = 0; k < setup_.layers(); ++k) {
      Field& f = out[uz(k)];
      kit::layer_diffusivity(setup_, kj, k, f);
      for (int j = 0; j <= setup_.ny; ++j) {
        for (int i = 0; i <= setup_.nx; ++i) f(i, j) *= taper_.x_node[uz(i)] * taper_.y_node[uz(j)];
      }
    }
  }

 private:
  enum Slot : std::size_t { kFaceX = 0, kFaceY, kLayer };
  static constexpr std::size_t kInterfaceGroup = 0;

  // K_j of every interface at the nodes (walls 0).
  std::span<Field> interface_k(const StateView& s, Scratch& scratch) const {
    const int ni = setup_.interfaces();
    const std::span<Field> kj =
        scratch.group(kInterfaceGroup, uz(ni), setup_.nx + 1, setup_.ny + 1);
    for (int j = 0; j < ni; ++j) {
      kit::eady_diffusivity(setup_, s.psi, j, alpha_l2_, cap_, kj[uz(j)]);
      zero_walls(kj[uz(j)]);
    }
    return kj;
  }
  void zero_walls(Field& f) const {
    f.row(0).setZero();
    f.row(setup_.nx).setZero();
    f.col(0).setZero();
    f.col(setup_.ny).setZero();
  }

  Setup setup_;
  Target target_;
  double cap_;
  double alpha_l2_ = 0.0;
  kit::Taper taper_;
};

const Registrar kRegisterEady{
    Info{"eady",
         "K_j = alpha L^2 sigma_j, sigma_j = f0 |u_j - u_{j+1}| / sqrt(g'_j h_j); F = -K grad q~",
         "Visbeck, Marshall, Haine and Spall (1997), J. Phys. Oceanogr. 27 (from memory)",
         {Param::real("alpha", "1", 0.015, 1e-4, 1.0,
                      "efficiency alpha (0.015 from Visbeck et al. for L = the baroclinic zone's "
                      "width; re-tune for L = Ld1)")
              .tunable(true),
          kit::mixing_length_param(), kit::length_param(), kit::eddy_velocity_param(),
          kit::target_param("stretching"),
          Param::real("k_max_m2_per_s", "m2 s-1", 1e4, 1.0, 1e6, "cap on K"), kit::taper_param()},
         true,
         [](const Params& p, const Setup& s) -> std::unique_ptr<Closure> {
           return std::make_unique<EadyClosure>(p, s);
         }}};

}  // namespace
}  // namespace plateau::closure
