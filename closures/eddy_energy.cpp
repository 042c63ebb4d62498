// eddy_energy: an energy-constrained diffusivity of GEOMETRIC type (CLOSURES.md, family 3),
// after Marshall, Maddison and Berloff (2012), J. Phys. Oceanogr. 42, and Mak, Maddison,
// Marshall and Munday (2018), J. Phys. Oceanogr. 48:
//
//   K = clamp(alpha E / max(Sigma, sigma_floor), k_min, k_max)      (the same on every interface)
//   Sigma = sum_j f0 |u_j - u_{j+1}| sqrt(h_j / g'_j)               (m s^-1; h_j the mean
//   thickness) F_k = layered Gent-McWilliams flux with K on every interface   (stretching target
//   only)
//
// E (m^3 s^-2, depth-integrated eddy energy) is prognostic:
//
//   dE/dt + div(U_bt E) = C - lambda E + kappa_E lap E,   E(0) = e0 > 0 (uniform)
//
// with U_bt the barotropic velocity and C exactly the energy the applied fluxes take from the
// resolved flow at each face, sum_k H_k F_k . grad psi_k, which for this flux is
// sum_j (f0^2/g'_j) K |grad(psi_j - psi_{j+1})|^2 >= 0, shared half and half by the face's two
// nodes: the basin integral of C equals minus the closure's energy tendency (to rounding). With
// K = alpha E / Sigma this source is alpha sigma E: E grows at alpha times the Eady rate where
// the flow is baroclinic and decays at lambda. E = 0 would stay 0 (the source is proportional
// to K and K to E), hence e0 > 0 and k_min. Advection is first-order upwind, diffusion has
// no-flux walls, both conserve E; the update is sub-stepped to stay a positive combination, so
// E >= 0.
//
// The values of alpha (0.04), lambda (1/100 days) and kappa_E (500 m^2/s) are of the order
// used by the papers above, from memory: tune them.

#include <algorithm>
#include <memory>
#include <sstream>
#include <stdexcept>
#include <vector>

#include "closures/closure.hpp"
#include "closures/flux_kit.hpp"

namespace plateau::closure {
namespace {

using kit::uz;

enum Slot : std::size_t {
  kK = 0,
  kSigma,
  kWork,
  kFaceX,
  kFaceY,
  kSource,
  kConversion,              // 2 slots
  kStep = kConversion + 2,  // 6 slots
};

class EddyEnergyClosure final : public Closure {
 public:
  EddyEnergyClosure(const Params& p, const Setup& s)
      : setup_(s),
        alpha_(p.real("alpha")),
        e0_(p.real("e0_m3_per_s2")),
        sigma_floor_(p.real("sigma_floor_m_per_s")),
        k_min_(p.real("k_min_m2_per_s")),
        k_max_(p.real("k_max_m2_per_s")) {
    rates_.lambda_per_s = p.real("lambda_per_day") / kit::kSecondsPerDay;
    rates_.kappa_m2_per_s = p.real("kappa_e_m2_per_s");
    if (k_min_ > k_max_) {
      std::ostringstream m;
      m << "k_min_m2_per_s = " << k_min_ << " exceeds k_max_m2_per_s = " << k_max_;
      throw std::invalid_argument(m.str());
    }
  }

  [[nodiscard]] Target target() const override { return Target::stretching; }
  [[nodiscard]] double diffusivity_bound() const override { return k_max_; }

  [[nodiscard]] std::vector<FieldInfo> prognostic_fields() const override {
    return {{"eddy_energy", "m3 s-2", "depth-integrated eddy energy E of the closure",
             Placement::column}};
  }
  void initial_prognostic(std::span<Field> fields) const override {
    Field& e = fields.front();
    e = setup_.nodes();
    e.block(1, 1, setup_.nx - 1, setup_.ny - 1).setConstant(e0_);
  }

  void fluxes(const StateView& s, double /*dt_s*/, Fluxes& out, Scratch& scratch) const override {
    Field& k = scratch.get(kK, setup_.nx + 1, setup_.ny + 1);
    out.k_max = diffusivity(s, k, scratch);
    Field& kx = scratch.get(kFaceX, setup_.nx, setup_.ny + 1);
    Field& ky = scratch.get(kFaceY, setup_.nx + 1, setup_.ny);
    kit::to_faces(setup_, k, nullptr, kx, ky);
    kit::stretching_flux(setup_, s.psi, {&kx, 1}, {&ky, 1}, out);
  }

  void step_prognostic(const StateView& frozen, const Fluxes& applied, double dt_s,
                       std::span<Field> fields, Scratch& scratch) const override {
    Field& c = scratch.get(kSource, setup_.nx + 1, setup_.ny + 1);
    kit::energy_conversion(setup_, frozen.psi, applied, c, scratch, kConversion);
    kit::step_eddy_energy(setup_, frozen.psi, frozen.wall_psi, c, dt_s, rates_, fields.front(),
                          scratch, kStep);
  }

  [[nodiscard]] std::vector<FieldInfo> diagnostic_fields() const override {
    return {
        {"closure_k", "m2 s-1", "eddy diffusivity K = alpha E / Sigma (every interface)",
         Placement::interface},
        {"eddy_energy_source", "m3 s-3",
         "energy taken from the resolved flow by the closure (source of E)", Placement::column}};
  }
  void diagnostics(const StateView& s, const Fluxes& applied, std::span<Field> out,
                   Scratch& scratch) const override {
    Field& k = scratch.get(kK, setup_.nx + 1, setup_.ny + 1);
    diffusivity(s, k, scratch);
    const int ni = setup_.interfaces();
    for (int j = 0; j < ni; ++j) {
      out[uz(j)].setZero();
      out[uz(j)].block(1, 1, setup_.nx - 1, setup_.ny - 1) =
          k.block(1, 1, setup_.nx - 1, setup_.ny - 1);
    }
    kit::energy_conversion(setup_, s.psi, applied, out[uz(ni)], scratch, kConversion);
  }

 private:
  // K at the interior nodes from E (the view's prognostic field) and the shear; returns max K.
  double diffusivity(const StateView& s, Field& k, Scratch& scratch) const {
    Field& sigma = scratch.get(kSigma, setup_.nx + 1, setup_.ny + 1);
    kit::shear_sum(setup_, s.psi, sigma, scratch.get(kWork, setup_.nx + 1, setup_.ny + 1));
    const Field& e = s.prognostic.front();
    const int nx = setup_.nx;
    const int ny = setup_.ny;
    const auto rows = k.rows();
    const double floor = sigma_floor_;
    const double lo = k_min_;
    const double hi = k_max_;
    const double alpha = alpha_;
    // The largest K of each row, then of the rows (max is exact and order-free).
    std::vector<double> row_max(static_cast<std::size_t>(ny + 1), 0.0);
    kit::for_rows(kit::parallel(setup_), 1, ny, [&](int j) {
      const double* ej = e.data() + j * rows;
      const double* sj = sigma.data() + j * rows;
      double* kj = k.data() + j * rows;
#pragma omp simd
      for (int i = 1; i < nx; ++i) {
        // std::max and std::min on locals (on the loaded references GCC 12 keeps a branch
        // and does not vectorise the loop).
        const double sg = sj[i];
        const double v = alpha * ej[i] / (sg < floor ? floor : sg);
        const double a = v < lo ? lo : v;
        kj[i] = hi < a ? hi : a;
      }
      row_max[static_cast<std::size_t>(j)] =
          Eigen::Map<const Eigen::ArrayXd>(kj + 1, static_cast<Eigen::Index>(nx - 1)).maxCoeff();
    });
    return *std::max_element(row_max.begin(), row_max.end());
  }

  Setup setup_;
  double alpha_;
  double e0_;
  double sigma_floor_;
  double k_min_;
  double k_max_;
  kit::EddyEnergyRates rates_;
};

const Registrar kRegisterEddyEnergy{Info{
    "eddy_energy",
    "K = alpha E / Sigma, Sigma = sum_j f0 |u_j - u_{j+1}| sqrt(h_j/g'_j); E prognostic, fed by "
    "the energy the GM flux removes",
    "Marshall, Maddison and Berloff (2012), J. Phys. Oceanogr. 42; Mak, Maddison, Marshall and "
    "Munday (2018), J. Phys. Oceanogr. 48",
    {Param::real("alpha", "1", 0.04, 1e-3, 1.0, "efficiency 0 < alpha <= 1 of K = alpha E/Sigma")
         .tunable(true),
     Param::real("lambda_per_day", "day-1", 0.01, 0.0, 1.0, "linear damping rate lambda of E")
         .tunable(),
     Param::real("kappa_e_m2_per_s", "m2 s-1", 500.0, 0.0, 1e5, "diffusivity of E").tunable(),
     Param::real("e0_m3_per_s2", "m3 s-2", 1.0, 1e-6, 1e4,
                 "initial depth-integrated eddy energy (uniform, > 0)"),
     Param::real("sigma_floor_m_per_s", "m s-1", 1e-4, 1e-8, 1.0, "floor on Sigma"),
     Param::real("k_min_m2_per_s", "m2 s-1", 10.0, 0.0, 1e4,
                 "minimum K (lets E grow again from 0)"),
     Param::real("k_max_m2_per_s", "m2 s-1", 1e4, 1.0, 1e6, "cap on K")},
    true,
    [](const Params& p, const Setup& s) -> std::unique_ptr<Closure> {
      return std::make_unique<EddyEnergyClosure>(p, s);
    }}};

}  // namespace
}  // namespace plateau::closure
