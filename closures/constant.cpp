// constant: down-gradient PV flux with one constant diffusivity K (CLOSURES.md, family 2).
//
//   stretching (default): layered Gent and McWilliams (1990, J. Phys. Oceanogr. 20) form with K
//     on every interface,
//       F_k = -(f0^2/H_k) [K grad(psi_{k-1} - psi_k)/g'_{k-1} + K grad(psi_{k+1} - psi_k)/g'_k]
//           = -K grad (S psi)_k,
//     so sum_k H_k F_k = 0 (momentum is conserved) and the energy tendency is
//     -sum_j (f0^2/g'_j) integral K |grad(psi_j - psi_{j+1})|^2 <= 0.
//   full_pv: F_k = -K w grad q_k, with w the wall taper (K -> 0 over taper_km; without it, the
//     rest state's flux -K beta would meet the no-flux walls as sources of +-K beta/dy in the
//     rows next to the northern and southern walls). PV diffusion is the mixing that
//     homogenises PV inside closed streamlines (Rhines and Young 1982, J. Fluid Mech. 122).
//     Full-PV diffusion with a K that differs between layers does not conserve momentum; this
//     closure uses the same K (and the same taper) in every layer.

#include <algorithm>
#include <memory>

#include "closures/closure.hpp"
#include "closures/flux_kit.hpp"

namespace plateau::closure {
namespace {

using kit::uz;

class ConstantClosure final : public Closure {
 public:
  ConstantClosure(const Params& p, const Setup& s)
      : setup_(s), k_(p.real("k_m2_per_s")), target_(kit::target_of(p)) {
    if (target_ == Target::full_pv) {
      taper_ = kit::make_taper(s, kit::taper_width(s, p.real("taper_km") * kit::kMetresPerKm));
    }
    Field nodes = s.nodes();
    nodes.setConstant(k_);
    kit::to_faces(s, nodes, target_ == Target::full_pv ? &taper_ : nullptr, kx_, ky_);
  }

  [[nodiscard]] Target target() const override { return target_; }
  [[nodiscard]] double diffusivity_bound() const override { return k_; }
  [[nodiscard]] double wall_taper_width_m() const override { return taper_.width_m; }

  void fluxes(const StateView& s, double /*dt_s*/, Fluxes& out,
              Scratch& /*scratch*/) const override {
    if (target_ == Target::stretching) {
      kit::stretching_flux(setup_, s.psi, {&kx_, 1}, {&ky_, 1}, out);
    } else {
      for (int k = 0; k < setup_.layers(); ++k) {
        kit::full_pv_flux(setup_, s.q[uz(k)], kx_, ky_, out.fx[uz(k)], out.fy[uz(k)]);
      }
    }
    out.k_max = k_;
  }

  [[nodiscard]] std::vector<FieldInfo> diagnostic_fields() const override {
    return {{"closure_k", "m2 s-1", "eddy PV diffusivity K (constant closure, wall taper applied)",
             target_ == Target::stretching ? Placement::interface : Placement::layer}};
  }
  void diagnostics(const StateView& /*s*/, const Fluxes& /*applied*/, std::span<Field> out,
                   Scratch& /*scratch*/) const override {
    for (Field& f : out) {
      f.setZero();
      for (int j = 1; j < setup_.ny; ++j) {
        for (int i = 1; i < setup_.nx; ++i) {
          const double w =
              target_ == Target::full_pv ? taper_.x_node[uz(i)] * taper_.y_node[uz(j)] : 1.0;
          f(i, j) = k_ * w;
        }
      }
    }
  }

 private:
  Setup setup_;
  double k_;
  Target target_;
  kit::Taper taper_;
  Field kx_;
  Field ky_;
};

const Registrar kRegisterConstant{
    Info{"constant",
         "F = -K grad q~, q~ = (S psi)_k with K on the interfaces (GM form) or the full PV q",
         "Gent and McWilliams (1990), J. Phys. Oceanogr. 20; Rhines and Young (1982), "
         "J. Fluid Mech. 122",
         {Param::real("k_m2_per_s", "m2 s-1", 500.0, 1.0, 1e5, "eddy diffusivity K").tunable(true),
          kit::target_param("stretching"), kit::taper_param()},
         true,
         [](const Params& p, const Setup& s) -> std::unique_ptr<Closure> {
           return std::make_unique<ConstantClosure>(p, s);
         }}};

}  // namespace
}  // namespace plateau::closure
