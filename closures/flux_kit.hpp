#pragma once
// Numerical pieces the closure families share (a sibling of closure.hpp; closures include only
// these two). Every routine writes the interior faces or interior nodes only and leaves the
// faces next to the walls at zero, so a closure that limits its own fluxes sees the same
// no-flux walls as the harness. Loops split rows over threads and never reduce across them, so
// results do not depend on the thread count.
//
// Notation: q~ is the diffused quantity (the full PV, or its stretching part
//   q~_k = (S psi)_k = (f0^2/H_k) [(psi_{k-1} - psi_k)/g'_{k-1} - (psi_k - psi_{k+1})/g'_k]);
// d_j = grad(psi_j - psi_{j+1}) is the shear across interface j (|d_j| = |u_j - u_{j+1}|).

#include <span>
#include <string>

#include "closures/closure.hpp"

namespace plateau::closure::kit {

inline std::size_t uz(int k) { return static_cast<std::size_t>(k); }

// Grids with at least this many nodes split their loops over threads (tests lower it to run
// the threaded path on small grids), when more than one thread is available.
long min_parallel_nodes();
void set_min_parallel_nodes(long nodes);
[[nodiscard]] bool parallel(const Setup& s);

// Wide vectors. The row loops of for_rows run in a build of themselves for AVX2 (four doubles
// per vector, blends in one instruction) where the CPU has it, and in the baseline x86-64 build
// (SSE2) elsewhere. Both builds do the same IEEE operations on every element in the same order:
// no fused multiply-add (AVX2 does not include FMA, and the project compiles with
// -ffp-contract=off), no reassociation, so the bits are the same (tests/unit check it by
// running every closure both ways). set_wide_simd(false) forces the baseline build (tests), as
// PLATEAU_SIMD=baseline in the environment does from the start; set_wide_simd(true) is
// ignored on a CPU without AVX2.
[[nodiscard]] bool cpu_has_wide_simd();
[[nodiscard]] bool wide_simd();
void set_wide_simd(bool on);

namespace detail {
#if defined(__x86_64__) || defined(__i386__)
#define PLATEAU_KIT_HAS_WIDE 1
// flatten inlines the body (and what it calls) here, so its loops are vectorised for AVX2.
template <typename Body>
[[gnu::target("avx2"), gnu::flatten]] void rows_wide(int lo, int hi, const Body& body) {
  for (int j = lo; j < hi; ++j) body(j);
}
#else
#define PLATEAU_KIT_HAS_WIDE 0
#endif
template <typename Body>
void rows_base(int lo, int hi, const Body& body) {
  for (int j = lo; j < hi; ++j) body(j);
}
template <typename Body>
void rows(bool wide, int lo, int hi, const Body& body) {
#if PLATEAU_KIT_HAS_WIDE
  if (wide) {
    rows_wide(lo, hi, body);
    return;
  }
#endif
  (void)wide;
  rows_base(lo, hi, body);
}
}  // namespace detail

// body(j) for the rows j = lo..hi-1: split statically over the threads if `par`, else a plain
// loop that does not enter a parallel region at all. With libgomp even a region that runs on
// one thread (`#pragma omp parallel if (false)`, or a team of one) costs a futex system call,
// measured at 1.3 us on the 2-core build machine; a closure step has some 20 such loops.
// Each row is computed by one thread in the same order either way: the same bits.
template <typename Body>
void for_rows(bool par, int lo, int hi, const Body& body) {
  const bool wide = wide_simd();
  if (par) {
#pragma omp parallel for schedule(static)
    for (int j = lo; j < hi; ++j) detail::rows(wide, j, j + 1, body);
  } else {
    detail::rows(wide, lo, hi, body);
  }
}

// ---- parameters several families declare ---------------------------------------------------

inline constexpr double kMetresPerKm = 1000.0;
inline constexpr double kSecondsPerDay = 86400.0;

[[nodiscard]] inline Param target_param(const std::string& def) {
  return Param::choice("target", {"stretching", "full_pv"}, def,
                       "diffused q~: stretching (S psi)_k with K on the interfaces (conserves "
                       "momentum) or full_pv q (K per layer)");
}
[[nodiscard]] inline Target target_of(const Params& p) {
  return p.choice("target") == "full_pv" ? Target::full_pv : Target::stretching;
}
[[nodiscard]] inline Param taper_param() {
  return Param::real("taper_km", "km", 0.0, 0.0, 5000.0,
                     "full_pv only: width over which K tapers to 0 at the walls; 0: the larger "
                     "of 2 grid intervals and the Munk width");
}
[[nodiscard]] inline Param mixing_length_param() {
  return Param::choice("mixing_length", {"deformation", "fixed", "rhines"}, "deformation",
                       "mixing length L: the first deformation radius Ld1, length_km, or "
                       "min(Ld1, sqrt(u_e/beta))");
}
[[nodiscard]] inline Param length_param() {
  return Param::real("length_km", "km", 100.0, 1.0, 5000.0,
                     "the fixed mixing length (mixing_length = fixed)");
}
[[nodiscard]] inline Param eddy_velocity_param() {
  return Param::real("u_e_m_per_s", "m s-1", 0.05, 1e-3, 2.0,
                     "declared eddy velocity scale U_e (Rhines scale, Cauchy-Schwarz bound)")
      .tunable(true);
}

// ---- walls -----------------------------------------------------------------------------------

// Width of the wall taper: `requested_m` if > 0, else the larger of two grid intervals and the
// Munk width (A2/beta)^(1/3) (CLOSURES.md).
[[nodiscard]] double taper_width(const Setup& s, double requested_m);

// Taper weights w(d) = sin^2(pi d / (2 W)) for d < W, 1 beyond, with d the distance from the
// nearest wall; a face's weight is the product of its x and y factors. Smooth, so the rest-state
// tendency -beta dK/dy that it spreads over the taper zone has no jump.
struct Taper {
  double width_m = 0.0;
  std::vector<double> x_node;  // nx+1: at x_i
  std::vector<double> x_face;  // nx:   at x_{i+1/2}
  std::vector<double> y_node;  // ny+1
  std::vector<double> y_face;  // ny
};
[[nodiscard]] Taper make_taper(const Setup& s, double width_m);

// ---- derived fields --------------------------------------------------------------------------

// q~_k at every node (walls from the wall psi), s^-1.
void stretching_pv(const Setup& s, std::span<const Field> psi, int k, Field& out);
// |d_j| = |u_j - u_{j+1}| at the interior nodes (centred differences), m s^-1.
void shear_speed(const Setup& s, std::span<const Field> psi, int j, Field& out);

// Eady-scaled diffusivity of interface j at the interior nodes (Visbeck et al. 1997, from
// memory): K_j = min(alpha L^2 sigma_j, cap), sigma_j = f0 |d_j| / sqrt(g'_j h_j), h_j the mean
// of the two layer thicknesses. `alpha_l2` is alpha L^2 in m^2. Returns the largest K_j.
double eady_diffusivity(const Setup& s, std::span<const Field> psi, int j, double alpha_l2,
                        double cap, Field& out);

// Layer k's diffusivity from the interface values at the interior nodes: the mean of the
// interfaces above and below it (the top and bottom layers take their one interface's value).
void layer_diffusivity(const Setup& s, std::span<const Field> interface_k, int k, Field& out);

// Mixing-length choices of CLOSURES.md: a fixed length, the first deformation radius, or
// min(Ld1, sqrt(U_e / beta)) (the Rhines scale of an eddy velocity U_e).
enum class MixingLength { fixed, deformation, rhines };
[[nodiscard]] MixingLength mixing_length_of(const std::string& choice);
[[nodiscard]] double mixing_length(const Setup& s, MixingLength m, double fixed_m, double u_e);

// Face values of a node field: the mean of the two nodes, times the taper (if any), on the
// interior-interior faces; the other faces 0.
void to_faces(const Setup& s, const Field& nodes, const Taper* taper, Field& kx, Field& ky);

// The eddy velocity u_e = sqrt(scale max(E, 0)) on the interior-interior faces, with E at a
// face the mean of its two nodes (scale = 2/H for a depth-integrated E); the other faces 0.
void eddy_velocity_faces(const Setup& s, const Field& e, double scale, Field& ux, Field& uy);

// ---- fluxes ----------------------------------------------------------------------------------

// F = -K grad q on the faces of one layer.
void full_pv_flux(const Setup& s, const Field& q, const Field& kx, const Field& ky, Field& fx,
                  Field& fy);
// Layered Gent-McWilliams form with K_j on the interfaces (faces kx[j], ky[j]):
//   F_k = -(f0^2/H_k) [K_{k-1} d_{k-1}/g'_{k-1} - K_k d_k/g'_k],   sum_k H_k F_k = 0.
// Adds to out (which the caller zeroes). One pair of face arrays (kx.size() == 1) serves every
// interface.
void stretching_flux(const Setup& s, std::span<const Field> psi, std::span<const Field> kx,
                     std::span<const Field> ky, Fluxes& out);
// The part of interface j: adds +(f0^2/H_j) K_j d_j/g'_j to layer j, -(f0^2/H_{j+1}) K_j d_j/g'_j
// to layer j+1.
void add_interface_flux(const Setup& s, std::span<const Field> psi, int j, const Field& kx,
                        const Field& ky, Fluxes& out);

// (a) The Cauchy-Schwarz bound |F| <= c u_e L |grad q~| on every face (normal components),
// with u_e on the faces (ux, uy). `common` scales every layer of a face by the same factor
// (keeps sum_k H_k F_k = 0 for the stretching target).
// Uses scratch slots first_slot, first_slot + 1.
void cauchy_schwarz_limit(const Setup& s, std::span<const Field> qt, const Field& ux,
                          const Field& uy, double c_times_length, bool common, Fluxes& f,
                          Scratch& scratch, std::size_t first_slot);
// (a) as a cap on face diffusivities: K <= c u_e L (the same bound where the flux is -K g~).
void cap_faces(const Setup& s, const Field& ux, const Field& uy, double c_times_length, Field& kx,
               Field& ky);
// (b) Zalesak (1979) flux-corrected limiter with a zero low-order flux: scales the fluxes so
// that qt - dt div F stays within the [min, max] of qt over each interior node and its interior
// neighbours (no new extremum). `common` takes the smallest factor of the layers per face.
// Uses scratch slots first_slot .. first_slot + 2 N + 1.
void zalesak_limit(const Setup& s, std::span<const Field> qt, double dt, bool common, Fluxes& f,
                   Scratch& scratch, std::size_t first_slot);

// ---- energy ----------------------------------------------------------------------------------

// The energy the fluxes take from the resolved flow, per unit area at the interior nodes
// (m^3 s^-3): each interior face's conversion c = sum_k H_k F_k . grad psi_k, half to each of its
// two nodes. Its interior sum times dx dy equals -dE/dt of the closure step exactly (summation
// by parts of -sum_k H_k sum (psi_k - c_k) dq_k dx dy with the wall faces zero). Uses scratch
// slots first_slot, first_slot + 1.
void energy_conversion(const Setup& s, std::span<const Field> psi, const Fluxes& applied,
                       Field& out, Scratch& scratch, std::size_t first_slot);

// Sigma = sum_j f0 |u_j - u_{j+1}| sqrt(h_j / g'_j) at the interior nodes, m s^-1.
void shear_sum(const Setup& s, std::span<const Field> psi, Field& out, Field& work);

// One step of a depth-integrated eddy energy E (m^3 s^-2):
//   dE/dt = source - div(U_bt E) + kappa lap E - lambda E
// with U_bt the barotropic velocity, from the corner values of sum_k H_k (psi_k - c_k) / H (zero
// on the ring of corners next to the walls, so no energy crosses them), first-order upwind
// advection and no-flux walls, both conservative; sub-stepped so that every update is a
// positive combination (E >= 0 holds); the source is frozen and applied in full. Uses scratch
// slots first_slot .. first_slot + 5.
struct EddyEnergyRates {
  double lambda_per_s = 0.0;
  double kappa_m2_per_s = 0.0;
};
void step_eddy_energy(const Setup& s, std::span<const Field> psi, std::span<const double> wall_psi,
                      const Field& source, double dt, const EddyEnergyRates& rates, Field& e,
                      Scratch& scratch, std::size_t first_slot);

}  // namespace plateau::closure::kit
