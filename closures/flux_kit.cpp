#include "closures/flux_kit.hpp"

#include <algorithm>
#include <atomic>
#include <cmath>
#include <cstdlib>
#include <limits>
#include <numbers>
#include <stdexcept>
#include <omp.h>

namespace plateau::closure::kit {
namespace {

// Below about 96^2 nodes a parallel region costs more than these loops (as for the model's).
std::atomic<long> g_min_parallel_nodes{96L * 96L};

// Plain loops over one grid row (j fixed, i contiguous in memory): Eigen's element access
// checks bounds unless NDEBUG is set (the sanitizer build), and deep expression templates are
// not inlined at -O2, so the hot loops run on column pointers.
const double* col(const Field& f, int j) {
  return f.data() + static_cast<Eigen::Index>(j) * f.rows();
}
double* col(Field& f, int j) { return f.data() + static_cast<Eigen::Index>(j) * f.rows(); }

// n values from p as an Eigen array, for its vectorised reductions (an `omp simd reduction`
// kept its accumulator in memory in the baseline build: one store-to-load chain per vector).
Eigen::Map<const Eigen::ArrayXd> row_segment(const double* p, int n) {
  return {p, static_cast<Eigen::Index>(n)};
}

// Zeroes the first and last row and column: the faces and corners next to the walls, which
// the loops never write, so that a reused scratch array has them at zero.
void zero_border(Field& f) {
  f.row(0).setZero();
  f.row(f.rows() - 1).setZero();
  f.col(0).setZero();
  f.col(f.cols() - 1).setZero();
}

double taper_weight(double d, double width) {
  if (width <= 0.0 || d >= width) return 1.0;
  if (d <= 0.0) return 0.0;
  const double s = std::sin(0.5 * std::numbers::pi * d / width);
  return s * s;
}

}  // namespace

bool cpu_has_wide_simd() {
#if PLATEAU_KIT_HAS_WIDE
  static const bool has = [] {
    __builtin_cpu_init();
    return __builtin_cpu_supports("avx2") != 0;
  }();
  return has;
#else
  return false;
#endif
}

namespace {
// PLATEAU_SIMD=baseline in the environment starts with the baseline build (to measure it, or
// to compare bits on one machine).
std::atomic<bool>& wide_flag() {
  static std::atomic<bool> on{[] {
    const char* v = std::getenv("PLATEAU_SIMD");
    return cpu_has_wide_simd() && !(v != nullptr && std::string(v) == "baseline");
  }()};
  return on;
}
}  // namespace

bool wide_simd() { return wide_flag().load(std::memory_order_relaxed); }
void set_wide_simd(bool on) { wide_flag().store(on && cpu_has_wide_simd()); }

long min_parallel_nodes() { return g_min_parallel_nodes.load(); }
void set_min_parallel_nodes(long nodes) { g_min_parallel_nodes.store(nodes); }
bool parallel(const Setup& s) {
  return static_cast<long>(s.nx + 1) * static_cast<long>(s.ny + 1) >= min_parallel_nodes() &&
         omp_get_max_threads() > 1;
}

double taper_width(const Setup& s, double requested_m) {
  if (requested_m > 0.0) return requested_m;
  return std::max(2.0 * std::max(s.dx, s.dy), s.munk_width_m());
}

Taper make_taper(const Setup& s, double width_m) {
  Taper t;
  t.width_m = width_m;
  const double lx = s.lx();
  const double ly = s.ly();
  auto dist = [](double p, double l) { return std::min(p, l - p); };
  for (int i = 0; i <= s.nx; ++i) t.x_node.push_back(taper_weight(dist(s.x(i), lx), width_m));
  for (int i = 0; i < s.nx; ++i) {
    t.x_face.push_back(taper_weight(dist(s.dx * (i + 0.5), lx), width_m));
  }
  for (int j = 0; j <= s.ny; ++j) t.y_node.push_back(taper_weight(dist(s.y(j), ly), width_m));
  for (int j = 0; j < s.ny; ++j) {
    t.y_face.push_back(taper_weight(dist(s.dy * (j + 0.5), ly), width_m));
  }
  return t;
}

void stretching_pv(const Setup& s, std::span<const Field> psi, int k, Field& out) {
  const int n = s.layers();
  if (out.rows() != s.nx + 1 || out.cols() != s.ny + 1) out = s.nodes();
  const double f2h = s.f0 * s.f0 / s.h(k);
  const double up = k > 0 ? f2h / s.gprime(k - 1) : 0.0;
  const double dn = k < n - 1 ? f2h / s.gprime(k) : 0.0;
  const Field& pk = psi[uz(k)];
  const Field& pu = psi[uz(k > 0 ? k - 1 : k)];
  const Field& pd = psi[uz(k < n - 1 ? k + 1 : k)];
  const int rows = s.nx + 1;
  for_rows(parallel(s), 0, s.ny + 1, [&](int j) {
    const double* a = col(pu, j);
    const double* b = col(pk, j);
    const double* c = col(pd, j);
    double* o = col(out, j);
#pragma omp simd
    for (int i = 0; i < rows; ++i) o[i] = up * (a[i] - b[i]) - dn * (b[i] - c[i]);
  });
}

namespace {

// |d_j| on row jj of `out` (interior nodes), from the centred differences of psi_j - psi_{j+1}.
void shear_row(const Field& a, const Field& b, double hx, double hy, int nx, int jj, Field& out) {
  const double* a0 = col(a, jj);
  const double* b0 = col(b, jj);
  const double* as = col(a, jj - 1);
  const double* bs = col(b, jj - 1);
  const double* an = col(a, jj + 1);
  const double* bn = col(b, jj + 1);
  double* o = col(out, jj);
#pragma omp simd
  for (int i = 1; i < nx; ++i) {
    const double gx = hx * ((a0[i + 1] - b0[i + 1]) - (a0[i - 1] - b0[i - 1]));
    const double gy = hy * ((an[i] - bn[i]) - (as[i] - bs[i]));
    // std::sqrt vectorises: the project compiles with -fno-math-errno (CMakeLists.txt).
    o[i] = std::sqrt(gx * gx + gy * gy);
  }
}

}  // namespace

void shear_speed(const Setup& s, std::span<const Field> psi, int j, Field& out) {
  const Field& a = psi[uz(j)];
  const Field& b = psi[uz(j + 1)];
  const double hx = 0.5 / s.dx;
  const double hy = 0.5 / s.dy;
  if (out.rows() != s.nx + 1 || out.cols() != s.ny + 1) out = s.nodes();
  const int nx = s.nx;
  for_rows(parallel(s), 1, s.ny, [&](int jj) { shear_row(a, b, hx, hy, nx, jj, out); });
}

double eady_diffusivity(const Setup& s, std::span<const Field> psi, int j, double alpha_l2,
                        double cap, Field& out) {
  const Field& pa = psi[uz(j)];
  const Field& pb = psi[uz(j + 1)];
  const double hx = 0.5 / s.dx;
  const double hy = 0.5 / s.dy;
  if (out.rows() != s.nx + 1 || out.cols() != s.ny + 1) out = s.nodes();
  const double a = alpha_l2 * s.f0 / std::sqrt(s.gprime(j) * s.h_interface(j));
  const int nx = s.nx;
  const int ny = s.ny;
  // The shear and K row by row (one pass); the largest K of each row, then of the rows: max is
  // exact and order-free, so the result keeps its bits whatever the thread count.
  std::vector<double> row_max(uz(ny + 1), 0.0);
  for_rows(parallel(s), 1, ny, [&](int jj) {
    shear_row(pa, pb, hx, hy, nx, jj, out);
    double* o = col(out, jj);
#pragma omp simd
    for (int i = 1; i < nx; ++i) {
      const double k = a * o[i];
      o[i] = cap < k ? cap : k;  // std::min(k, cap), as a value select
    }
    row_max[uz(jj)] = row_segment(o + 1, nx - 1).maxCoeff();
  });
  double kmax = 0.0;
  for (int jj = 1; jj < ny; ++jj) kmax = std::max(kmax, row_max[uz(jj)]);
  return kmax;
}

void layer_diffusivity(const Setup& s, std::span<const Field> interface_k, int k, Field& out) {
  const int ni = s.interfaces();
  if (out.rows() != s.nx + 1 || out.cols() != s.ny + 1) out = s.nodes();
  out.setZero();
  if (ni == 0) return;
  const Field& above = interface_k[uz(k == 0 ? 0 : k - 1)];
  const Field& below = interface_k[uz(k == ni ? ni - 1 : k)];
  const int nx = s.nx;
  for_rows(parallel(s), 1, s.ny, [&](int j) {
    const double* a = col(above, j);
    const double* b = col(below, j);
    double* o = col(out, j);
#pragma omp simd
    for (int i = 1; i < nx; ++i) o[i] = 0.5 * (a[i] + b[i]);
  });
}

MixingLength mixing_length_of(const std::string& choice) {
  if (choice == "fixed") return MixingLength::fixed;
  if (choice == "deformation") return MixingLength::deformation;
  if (choice == "rhines") return MixingLength::rhines;
  throw std::invalid_argument("unknown mixing length choice '" + choice + "'");
}

double mixing_length(const Setup& s, MixingLength m, double fixed_m, double u_e) {
  switch (m) {
    case MixingLength::fixed:
      return fixed_m;
    case MixingLength::deformation:
      return s.ld1();
    case MixingLength::rhines:
      return std::min(s.ld1(), s.beta > 0.0 ? std::sqrt(u_e / s.beta) : s.ld1());
  }
  return 0.0;
}

void to_faces(const Setup& s, const Field& nodes, const Taper* taper, Field& kx, Field& ky) {
  const int nx = s.nx;
  const int ny = s.ny;
  const bool par = parallel(s);
  if (kx.rows() != nx || kx.cols() != ny + 1) kx = s.x_faces();
  if (ky.rows() != nx + 1 || ky.cols() != ny) ky = s.y_faces();
  zero_border(kx);
  zero_border(ky);
  const double* wxf = taper != nullptr ? taper->x_face.data() : nullptr;
  const double* wxn = taper != nullptr ? taper->x_node.data() : nullptr;
  for_rows(par, 1, ny, [&](int j) {
    const double* a = col(nodes, j);
    double* o = col(kx, j);
    if (taper != nullptr) {
      const double wy = taper->y_node[uz(j)];
#pragma omp simd
      for (int i = 1; i < nx - 1; ++i) o[i] = 0.5 * (a[i] + a[i + 1]) * wxf[i] * wy;
    } else {
#pragma omp simd
      for (int i = 1; i < nx - 1; ++i) o[i] = 0.5 * (a[i] + a[i + 1]);
    }
  });
  for_rows(par, 1, ny - 1, [&](int j) {
    const double* a = col(nodes, j);
    const double* b = col(nodes, j + 1);
    double* o = col(ky, j);
    if (taper != nullptr) {
      const double wy = taper->y_face[uz(j)];
#pragma omp simd
      for (int i = 1; i < nx; ++i) o[i] = 0.5 * (a[i] + b[i]) * wxn[i] * wy;
    } else {
#pragma omp simd
      for (int i = 1; i < nx; ++i) o[i] = 0.5 * (a[i] + b[i]);
    }
  });
}

void eddy_velocity_faces(const Setup& s, const Field& e, double scale, Field& ux, Field& uy) {
  const int nx = s.nx;
  const int ny = s.ny;
  const bool par = parallel(s);
  if (ux.rows() != nx || ux.cols() != ny + 1) ux = s.x_faces();
  if (uy.rows() != nx + 1 || uy.cols() != ny) uy = s.y_faces();
  zero_border(ux);
  zero_border(uy);
  auto velocity = [scale](double mean) { return std::sqrt(scale * (mean < 0.0 ? 0.0 : mean)); };
  for_rows(par, 1, ny, [&](int j) {
    const double* a = col(e, j);
    double* o = col(ux, j);
#pragma omp simd
    for (int i = 1; i < nx - 1; ++i) o[i] = velocity(0.5 * (a[i] + a[i + 1]));
  });
  for_rows(par, 1, ny - 1, [&](int j) {
    const double* a = col(e, j);
    const double* b = col(e, j + 1);
    double* o = col(uy, j);
#pragma omp simd
    for (int i = 1; i < nx; ++i) o[i] = velocity(0.5 * (a[i] + b[i]));
  });
}

void full_pv_flux(const Setup& s, const Field& q, const Field& kx, const Field& ky, Field& fx,
                  Field& fy) {
  const int nx = s.nx;
  const int ny = s.ny;
  const bool par = parallel(s);
  const double ix = 1.0 / s.dx;
  const double iy = 1.0 / s.dy;
  for_rows(par, 1, ny, [&](int j) {
    const double* qc = col(q, j);
    const double* k = col(kx, j);
    double* o = col(fx, j);
#pragma omp simd
    for (int i = 1; i < nx - 1; ++i) o[i] = -k[i] * (qc[i + 1] - qc[i]) * ix;
  });
  for_rows(par, 1, ny - 1, [&](int j) {
    const double* qc = col(q, j);
    const double* qn = col(q, j + 1);
    const double* k = col(ky, j);
    double* o = col(fy, j);
#pragma omp simd
    for (int i = 1; i < nx; ++i) o[i] = -k[i] * (qn[i] - qc[i]) * iy;
  });
}

void add_interface_flux(const Setup& s, std::span<const Field> psi, int jf, const Field& kx,
                        const Field& ky, Fluxes& out) {
  const int nx = s.nx;
  const int ny = s.ny;
  const bool par = parallel(s);
  const double ix = 1.0 / s.dx;
  const double iy = 1.0 / s.dy;
  const double f2 = s.f0 * s.f0;
  const Field& a = psi[uz(jf)];
  const Field& b = psi[uz(jf + 1)];
  const double up = f2 / (s.h(jf) * s.gprime(jf));      // the layer above gets +
  const double dn = f2 / (s.h(jf + 1) * s.gprime(jf));  // the layer below gets -
  Field& fxu = out.fx[uz(jf)];
  Field& fxd = out.fx[uz(jf + 1)];
  Field& fyu = out.fy[uz(jf)];
  Field& fyd = out.fy[uz(jf + 1)];
  for_rows(par, 1, ny, [&](int j) {
    const double* a0 = col(a, j);
    const double* b0 = col(b, j);
    const double* k = col(kx, j);
    double* u = col(fxu, j);
    double* d = col(fxd, j);
#pragma omp simd
    for (int i = 1; i < nx - 1; ++i) {
      const double w = k[i] * ((a0[i + 1] - b0[i + 1]) - (a0[i] - b0[i])) * ix;
      u[i] += up * w;
      d[i] -= dn * w;
    }
  });
  for_rows(par, 1, ny - 1, [&](int j) {
    const double* a0 = col(a, j);
    const double* b0 = col(b, j);
    const double* an = col(a, j + 1);
    const double* bn = col(b, j + 1);
    const double* k = col(ky, j);
    double* u = col(fyu, j);
    double* d = col(fyd, j);
#pragma omp simd
    for (int i = 1; i < nx; ++i) {
      const double w = k[i] * ((an[i] - bn[i]) - (a0[i] - b0[i])) * iy;
      u[i] += up * w;
      d[i] -= dn * w;
    }
  });
}

void stretching_flux(const Setup& s, std::span<const Field> psi, std::span<const Field> kx,
                     std::span<const Field> ky, Fluxes& out) {
  for (int j = 0; j < s.interfaces(); ++j) {
    const bool one = kx.size() == 1;
    add_interface_flux(s, psi, j, one ? kx.front() : kx[uz(j)], one ? ky.front() : ky[uz(j)], out);
  }
}

namespace {

// The smallest positive normal double: a divisor that is never zero.
constexpr double kTiny = std::numeric_limits<double>::min();

// The factor that brings |flux| down to `bound` (1 where the bound holds; 0 for a zero flux
// with a zero bound, which leaves the zero flux as it is).
double bound_factor(double flux, double bound) {
  const double a = std::abs(flux);
  const double d = a > kTiny ? a : kTiny;
  const double r = bound / d;
  return r < 1.0 ? r : 1.0;
}

// R+ and R- of one node (Zalesak 1979, eqs. 7-10, with a zero low-order flux), from q~ at the
// node and its west, east, south and north neighbours and the fluxes through its four faces.
[[gnu::always_inline]] inline void zalesak_node(double qc, double qw, double qe, double qsv,
                                                double qnv, double fw, double fe, double fs,
                                                double fn, double ax, double ay, double& rp,
                                                double& rm) {
  const double qmax = std::max(std::max(std::max(qc, qw), std::max(qe, qsv)), qnv);
  const double qmin = std::min(std::min(std::min(qc, qw), std::min(qe, qsv)), qnv);
  // Contributions to dq = -dt div F from the west, east, south and north faces.
  const double cw = ax * fw;
  const double ce = -ax * fe;
  const double cs = ay * fs;
  const double cn = -ay * fn;
  const double pp = std::max(cw, 0.0) + std::max(ce, 0.0) + std::max(cs, 0.0) + std::max(cn, 0.0);
  const double pm =
      std::max(-cw, 0.0) + std::max(-ce, 0.0) + std::max(-cs, 0.0) + std::max(-cn, 0.0);
  // min(1, Q/P), below 1 only where P > Q >= 0 (the limiter acts). No division by zero, so the
  // loop vectorises: P = 0 gives 1, or 0 where Q = 0 too (harmless: no flux enters that way).
  rp = std::min(1.0, (qmax - qc) / std::max(pp, kTiny));
  rm = std::min(1.0, (qc - qmin) / std::max(pm, kTiny));
}

}  // namespace

void cauchy_schwarz_limit(const Setup& s, std::span<const Field> qt, const Field& ux,
                          const Field& uy, double c_times_length, bool common, Fluxes& f,
                          Scratch& scratch, std::size_t first_slot) {
  const int n = s.layers();
  const int nx = s.nx;
  const int ny = s.ny;
  const bool par = parallel(s);
  const double cx = c_times_length / s.dx;
  const double cy = c_times_length / s.dy;
  Field& mfx = scratch.get(first_slot, nx, ny + 1);
  Field& mfy = scratch.get(first_slot + 1, nx + 1, ny);
  // Per row: each layer's factor, applied to that layer or (common) first reduced to the
  // smallest over the layers and applied to all.
  for_rows(par, 1, ny, [&](int j) {
    const double* u = col(ux, j);
    double* mr = col(mfx, j);
    for (int i = 1; i < nx - 1; ++i) mr[i] = 1.0;
    for (int k = 0; k < n; ++k) {
      const double* q = col(qt[uz(k)], j);
      double* fk = col(f.fx[uz(k)], j);
      if (common) {
#pragma omp simd
        for (int i = 1; i < nx - 1; ++i) {
          const double r = bound_factor(fk[i], cx * u[i] * std::abs(q[i + 1] - q[i]));
          const double c = mr[i];
          mr[i] = std::min(c, r);
        }
      } else {
        // The factor first, then the product (the fused loop does not vectorise).
#pragma omp simd
        for (int i = 1; i < nx - 1; ++i) {
          mr[i] = bound_factor(fk[i], cx * u[i] * std::abs(q[i + 1] - q[i]));
        }
#pragma omp simd
        for (int i = 1; i < nx - 1; ++i) fk[i] *= mr[i];
      }
    }
    if (!common) return;
    for (int k = 0; k < n; ++k) {
      double* fk = col(f.fx[uz(k)], j);
#pragma omp simd
      for (int i = 1; i < nx - 1; ++i) fk[i] *= mr[i];
    }
  });
  for_rows(par, 1, ny - 1, [&](int j) {
    const double* v = col(uy, j);
    double* mr = col(mfy, j);
    for (int i = 1; i < nx; ++i) mr[i] = 1.0;
    for (int k = 0; k < n; ++k) {
      const double* q0 = col(qt[uz(k)], j);
      const double* q1 = col(qt[uz(k)], j + 1);
      double* fk = col(f.fy[uz(k)], j);
      if (common) {
#pragma omp simd
        for (int i = 1; i < nx; ++i) {
          const double r = bound_factor(fk[i], cy * v[i] * std::abs(q1[i] - q0[i]));
          const double c = mr[i];
          mr[i] = std::min(c, r);
        }
      } else {
#pragma omp simd
        for (int i = 1; i < nx; ++i) {
          mr[i] = bound_factor(fk[i], cy * v[i] * std::abs(q1[i] - q0[i]));
        }
#pragma omp simd
        for (int i = 1; i < nx; ++i) fk[i] *= mr[i];
      }
    }
    if (!common) return;
    for (int k = 0; k < n; ++k) {
      double* fk = col(f.fy[uz(k)], j);
#pragma omp simd
      for (int i = 1; i < nx; ++i) fk[i] *= mr[i];
    }
  });
}

void cap_faces(const Setup& s, const Field& ux, const Field& uy, double c_times_length, Field& kx,
               Field& ky) {
  const int nx = s.nx;
  const int ny = s.ny;
  const bool par = parallel(s);
  for_rows(par, 1, ny, [&](int j) {
    const double* u = col(ux, j);
    double* k = col(kx, j);
#pragma omp simd
    for (int i = 1; i < nx - 1; ++i) {
      const double cap = c_times_length * u[i];
      const double v = k[i];
      k[i] = cap < v ? cap : v;
    }
  });
  for_rows(par, 1, ny - 1, [&](int j) {
    const double* v = col(uy, j);
    double* k = col(ky, j);
#pragma omp simd
    for (int i = 1; i < nx; ++i) {
      const double cap = c_times_length * v[i];
      const double w = k[i];
      k[i] = cap < w ? cap : w;
    }
  });
}

void zalesak_limit(const Setup& s, std::span<const Field> qt, double dt, bool common, Fluxes& f,
                   Scratch& scratch, std::size_t first_slot) {
  const int n = s.layers();
  const int nx = s.nx;
  const int ny = s.ny;
  const bool par = parallel(s);
  const double ax = dt / s.dx;
  const double ay = dt / s.dy;
  // R+ and R- of every layer at the interior nodes (Zalesak 1979, eqs. 7-10, with a zero
  // low-order flux). The bounds are the extremes of each node and its interior neighbours.
  std::vector<Field*> rps(uz(n));
  std::vector<Field*> rms(uz(n));
  for (int k = 0; k < n; ++k) {
    rps[uz(k)] = &scratch.get(first_slot + 2 * uz(k), nx + 1, ny + 1);
    rms[uz(k)] = &scratch.get(first_slot + 2 * uz(k) + 1, nx + 1, ny + 1);
  }
  // The bounds are the extremes of each node and its interior neighbours: rows next to the
  // northern and southern walls take themselves as their wall-side row; the first and last
  // node of each row are redone without their wall neighbour after the (vectorised) loop.
  // Rows whose R+ and R- are all 1 in every layer need no correction (in most steps most
  // rows): a face is limited only if a node beside it is. Each row's flag is set by the one
  // thread that computes the row.
  std::vector<char> limited(uz(ny + 1), 0);
  for (int k = 0; k < n; ++k) {
    const Field& q = qt[uz(k)];
    const Field& fx = f.fx[uz(k)];
    const Field& fy = f.fy[uz(k)];
    Field& rp = *rps[uz(k)];
    Field& rm = *rms[uz(k)];
    for_rows(par, 1, ny, [&](int j) {
      const double* q0 = col(q, j);
      const double* qs = col(q, j > 1 ? j - 1 : j);
      const double* qn = col(q, j < ny - 1 ? j + 1 : j);
      const double* fxc = col(fx, j);
      const double* fyc = col(fy, j);
      const double* fys = col(fy, j - 1);
      double* p = col(rp, j);
      double* m = col(rm, j);
#pragma omp simd
      for (int i = 1; i < nx; ++i) {
        zalesak_node(q0[i], q0[i - 1], q0[i + 1], qs[i], qn[i], fxc[i - 1], fxc[i], fys[i], fyc[i],
                     ax, ay, p[i], m[i]);
      }
      zalesak_node(q0[1], q0[1], q0[2], qs[1], qn[1], fxc[0], fxc[1], fys[1], fyc[1], ax, ay, p[1],
                   m[1]);
      zalesak_node(q0[nx - 1], q0[nx - 2], q0[nx - 1], qs[nx - 1], qn[nx - 1], fxc[nx - 2],
                   fxc[nx - 1], fys[nx - 1], fyc[nx - 1], ax, ay, p[nx - 1], m[nx - 1]);
      const double lo =
          std::min(row_segment(p + 1, nx - 1).minCoeff(), row_segment(m + 1, nx - 1).minCoeff());
      if (lo < 1.0) limited[uz(j)] = 1;
    });
  }
  // Face coefficients: a positive flux raises the downstream node and lowers the upstream one.
  Field& cfx = scratch.get(first_slot + 2 * uz(n), nx, ny + 1);
  Field& cfy = scratch.get(first_slot + 2 * uz(n) + 1, nx + 1, ny);
  for_rows(par, 1, ny, [&](int j) {
    if (limited[uz(j)] == 0) return;
    double* cr = col(cfx, j);
    for (int i = 1; i < nx - 1; ++i) cr[i] = 1.0;
    for (int k = 0; k < n; ++k) {
      const double* p = col(*rps[uz(k)], j);
      const double* m = col(*rms[uz(k)], j);
      double* fk = col(f.fx[uz(k)], j);
      // Face i of the row lies between nodes i (west) and i + 1 (east).
      auto coefficient = [&](int i) {
        const double pe = p[i + 1];
        const double mw = m[i];
        const double pw = p[i];
        const double me = m[i + 1];
        return fk[i] >= 0.0 ? std::min(pe, mw) : std::min(pw, me);
      };
      if (common) {
#pragma omp simd
        for (int i = 1; i < nx - 1; ++i) {
          const double old = cr[i];
          const double c = coefficient(i);
          cr[i] = std::min(old, c);
        }
      } else {
#pragma omp simd
        for (int i = 1; i < nx - 1; ++i) cr[i] = coefficient(i);
#pragma omp simd
        for (int i = 1; i < nx - 1; ++i) fk[i] *= cr[i];
      }
    }
    if (!common) return;
    for (int k = 0; k < n; ++k) {
      double* fk = col(f.fx[uz(k)], j);
#pragma omp simd
      for (int i = 1; i < nx - 1; ++i) fk[i] *= cr[i];
    }
  });
  for_rows(par, 1, ny - 1, [&](int j) {
    if (limited[uz(j)] == 0 && limited[uz(j + 1)] == 0) return;
    double* cr = col(cfy, j);
    for (int i = 1; i < nx; ++i) cr[i] = 1.0;
    for (int k = 0; k < n; ++k) {
      const double* p0 = col(*rps[uz(k)], j);
      const double* m0 = col(*rms[uz(k)], j);
      const double* p1 = col(*rps[uz(k)], j + 1);
      const double* m1 = col(*rms[uz(k)], j + 1);
      double* fk = col(f.fy[uz(k)], j);
      // Face i of the row lies between nodes (i, j) (south) and (i, j + 1) (north).
      auto coefficient = [&](int i) {
        const double pn = p1[i];
        const double ms = m0[i];
        const double ps = p0[i];
        const double mn = m1[i];
        return fk[i] >= 0.0 ? std::min(pn, ms) : std::min(ps, mn);
      };
      if (common) {
#pragma omp simd
        for (int i = 1; i < nx; ++i) {
          const double old = cr[i];
          const double c = coefficient(i);
          cr[i] = std::min(old, c);
        }
      } else {
#pragma omp simd
        for (int i = 1; i < nx; ++i) cr[i] = coefficient(i);
#pragma omp simd
        for (int i = 1; i < nx; ++i) fk[i] *= cr[i];
      }
    }
    if (!common) return;
    for (int k = 0; k < n; ++k) {
      double* fk = col(f.fy[uz(k)], j);
#pragma omp simd
      for (int i = 1; i < nx; ++i) fk[i] *= cr[i];
    }
  });
}

void energy_conversion(const Setup& s, std::span<const Field> psi, const Fluxes& applied,
                       Field& out, Scratch& scratch, std::size_t first_slot) {
  const int n = s.layers();
  const int nx = s.nx;
  const int ny = s.ny;
  const bool par = parallel(s);
  const double ix = 1.0 / s.dx;
  const double iy = 1.0 / s.dy;
  if (out.rows() != nx + 1 || out.cols() != ny + 1) out = s.nodes();
  // The conversion of every face once, c = sum_k H_k F_k (psi_k(+) - psi_k(-)) / spacing; the
  // faces next to the walls carry no flux, so their c is 0.
  Field& cx = scratch.get(first_slot, nx, ny + 1);
  Field& cy = scratch.get(first_slot + 1, nx + 1, ny);
  zero_border(cx);
  zero_border(cy);
  for_rows(par, 1, ny, [&](int j) {
    double* c = col(cx, j);
#pragma omp simd
    for (int i = 1; i < nx - 1; ++i) c[i] = 0.0;
    for (int k = 0; k < n; ++k) {
      const double* p = col(psi[uz(k)], j);
      const double* fk = col(applied.fx[uz(k)], j);
      const double hx = s.h(k) * ix;
#pragma omp simd
      for (int i = 1; i < nx - 1; ++i) c[i] += hx * fk[i] * (p[i + 1] - p[i]);
    }
  });
  for_rows(par, 1, ny - 1, [&](int j) {
    double* c = col(cy, j);
#pragma omp simd
    for (int i = 1; i < nx; ++i) c[i] = 0.0;
    for (int k = 0; k < n; ++k) {
      const double* p0 = col(psi[uz(k)], j);
      const double* p1 = col(psi[uz(k)], j + 1);
      const double* fk = col(applied.fy[uz(k)], j);
      const double hy = s.h(k) * iy;
#pragma omp simd
      for (int i = 1; i < nx; ++i) c[i] += hy * fk[i] * (p1[i] - p0[i]);
    }
  });
  // Each interior node takes half of each of its four faces.
  zero_border(out);
  for_rows(par, 1, ny, [&](int j) {
    const double* c0 = col(cx, j);
    const double* cs = col(cy, j - 1);
    const double* cn = col(cy, j);
    double* o = col(out, j);
#pragma omp simd
    for (int i = 1; i < nx; ++i) o[i] = 0.5 * ((c0[i - 1] + c0[i]) + (cs[i] + cn[i]));
  });
}

void shear_sum(const Setup& s, std::span<const Field> psi, Field& out, Field& work) {
  if (out.rows() != s.nx + 1 || out.cols() != s.ny + 1) out = s.nodes();
  if (s.interfaces() == 0) {
    out.setZero();
    return;
  }
  // Row by row: the first interface straight into `out`, the others through `work`.
  const int ni = s.interfaces();
  const int nx = s.nx;
  const double hx = 0.5 / s.dx;
  const double hy = 0.5 / s.dy;
  std::vector<double> w(uz(ni));
  for (int j = 0; j < ni; ++j) w[uz(j)] = s.f0 * std::sqrt(s.h_interface(j) / s.gprime(j));
  if (work.rows() != s.nx + 1 || work.cols() != s.ny + 1) work = s.nodes();
  zero_border(out);
  for_rows(parallel(s), 1, s.ny, [&](int jj) {
    shear_row(psi[0], psi[1], hx, hy, nx, jj, out);
    double* o = col(out, jj);
    const double w0 = w[0];
#pragma omp simd
    for (int i = 1; i < nx; ++i) o[i] *= w0;
    for (int j = 1; j < ni; ++j) {
      shear_row(psi[uz(j)], psi[uz(j + 1)], hx, hy, nx, jj, work);
      const double* a = col(work, jj);
      const double wj = w[uz(j)];
#pragma omp simd
      for (int i = 1; i < nx; ++i) o[i] += wj * a[i];
    }
  });
}

void step_eddy_energy(const Setup& s, std::span<const Field> psi, std::span<const double> wall_psi,
                      const Field& source, double dt, const EddyEnergyRates& rates, Field& e,
                      Scratch& scratch, std::size_t first_slot) {
  const int n = s.layers();
  const int nx = s.nx;
  const int ny = s.ny;
  const bool par = parallel(s);
  const double ix = 1.0 / s.dx;
  const double iy = 1.0 / s.dy;
  // The barotropic streamfunction sum_k H_k (psi_k - c_k) / H at the nodes, then at the corners
  // (i+1/2, j+1/2), i = 0..nx-1, j = 0..ny-1, the mean of the four nodes around; the ring of
  // corners next to the walls stays 0, which closes the walls of the interior control volumes.
  // Row by row, the layers added into each node in their order.
  Field& pb = scratch.get(first_slot, nx + 1, ny + 1);
  {
    const double depth = s.total_depth();
    for_rows(par, 0, ny + 1, [&](int j) {
      double* o = col(pb, j);
#pragma omp simd
      for (int i = 0; i <= nx; ++i) o[i] = 0.0;
      for (int k = 0; k < n; ++k) {
        const double* p = col(psi[uz(k)], j);
        const double w = s.h(k) / depth;
        const double c = wall_psi[uz(k)];
#pragma omp simd
        for (int i = 0; i <= nx; ++i) o[i] += w * (p[i] - c);
      }
    });
  }
  Field& pc = scratch.get(first_slot + 1, nx, ny);
  zero_border(pc);
  for_rows(par, 1, ny - 1, [&](int j) {
    const double* b0 = col(pb, j);
    const double* b1 = col(pb, j + 1);
    double* o = col(pc, j);
#pragma omp simd
    for (int i = 1; i < nx - 1; ++i) o[i] = 0.25 * ((b0[i] + b0[i + 1]) + (b1[i] + b1[i + 1]));
  });
  // Face-normal velocities: u on x-face (i, j) from the corners above and below it, v on
  // y-face (i, j) from the corners east and west of it. Discretely non-divergent. The largest
  // |u| and |v| of each row, then of the rows (max is exact and order-free).
  Field& u = scratch.get(first_slot + 2, nx, ny + 1);
  Field& v = scratch.get(first_slot + 3, nx + 1, ny);
  zero_border(u);
  zero_border(v);
  std::vector<double> row_u(uz(ny + 1), 0.0);
  std::vector<double> row_v(uz(ny + 1), 0.0);
  for_rows(par, 1, ny, [&](int j) {
    const double* c0 = col(pc, j - 1);
    const double* c1 = col(pc, j);
    double* o = col(u, j);
#pragma omp simd
    for (int i = 1; i < nx - 1; ++i) o[i] = -(c1[i] - c0[i]) * iy;
    row_u[uz(j)] = row_segment(o + 1, nx - 2).abs().maxCoeff();
  });
  for_rows(par, 1, ny - 1, [&](int j) {
    const double* c = col(pc, j);
    double* o = col(v, j);
#pragma omp simd
    for (int i = 1; i < nx; ++i) o[i] = (c[i] - c[i - 1]) * ix;
    row_v[uz(j)] = row_segment(o + 1, nx - 1).abs().maxCoeff();
  });
  const double umax = *std::max_element(row_u.begin(), row_u.end());
  const double vmax = *std::max_element(row_v.begin(), row_v.end());
  // Every update must stay a positive combination of the old values.
  const double rate = 2.0 * (umax * ix + vmax * iy) +
                      2.0 * rates.kappa_m2_per_s * (ix * ix + iy * iy) + rates.lambda_per_s;
  const int steps = std::max(1, static_cast<int>(std::ceil(dt * rate)));
  const double h = dt / steps;
  const double damp = 1.0 - h * rates.lambda_per_s;
  Field& fx = scratch.get(first_slot + 4, nx, ny + 1);
  Field& fy = scratch.get(first_slot + 5, nx + 1, ny);
  zero_border(fx);
  zero_border(fy);
  const double kx = rates.kappa_m2_per_s * ix;
  const double ky = rates.kappa_m2_per_s * iy;
  for (int m = 0; m < steps; ++m) {
    for_rows(par, 1, ny, [&](int j) {
      const double* uf = col(u, j);
      const double* ec = col(e, j);
      double* o = col(fx, j);
#pragma omp simd
      for (int i = 1; i < nx - 1; ++i) {
        o[i] = uf[i] * (uf[i] >= 0.0 ? ec[i] : ec[i + 1]) - kx * (ec[i + 1] - ec[i]);
      }
    });
    for_rows(par, 1, ny - 1, [&](int j) {
      const double* vf = col(v, j);
      const double* es = col(e, j);
      const double* en = col(e, j + 1);
      double* o = col(fy, j);
#pragma omp simd
      for (int i = 1; i < nx; ++i) {
        o[i] = vf[i] * (vf[i] >= 0.0 ? es[i] : en[i]) - ky * (en[i] - es[i]);
      }
    });
    for_rows(par, 1, ny, [&](int j) {
      const double* fxc = col(fx, j);
      const double* fyc = col(fy, j);
      const double* fys = col(fy, j - 1);
      const double* src = col(source, j);
      double* ec = col(e, j);
#pragma omp simd
      for (int i = 1; i < nx; ++i) {
        const double div = (fxc[i] - fxc[i - 1]) * ix + (fyc[i] - fys[i]) * iy;
        // Rounding (or a negative source of a non-stretching flux) must not leave E < 0.
        ec[i] = std::max(0.0, damp * ec[i] + h * (src[i] - div));
      }
    });
  }
}

}  // namespace plateau::closure::kit
