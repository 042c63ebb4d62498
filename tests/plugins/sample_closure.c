/* A sample external closure, written against closures/plugin_abi.h only: full-PV diffusion
 * with one constant diffusivity K and a wall taper,
 *
 *     F_k = -K w grad q_k,   w = sin^2(pi d / (2 W)) within W of a wall (d its distance), else 1,
 *
 * with W = taper_km, or the larger of two grid intervals and the Munk width (A2/beta)^(1/3)
 * when taper_km = 0. This is the textbook down-gradient PV closure (e.g. Rhines and Young 1982,
 * J. Fluid Mech. 122, for what it does to closed streamlines). One K in every layer; full-PV
 * diffusion with a K that differs between layers would not conserve momentum.
 *
 * Built as a MODULE library by tests/plugins/CMakeLists.txt; tests/unit/test_closure_plugin.cpp
 * loads it and runs it through the harness. */

#include <math.h>
#include <stdio.h>
#include <stdlib.h>

#include "closures/plugin_abi.h"

#if defined(__GNUC__)
#define SAMPLE_EXPORT __attribute__((visibility("default")))
#else
#define SAMPLE_EXPORT
#endif

typedef struct sample {
  int nx, ny, n_layers;
  double dx, dy;
  double k;        /* m^2 s^-1 */
  double width;    /* m */
  double* wx_node; /* nx+1 */
  double* wx_face; /* nx */
  double* wy_node; /* ny+1 */
  double* wy_face; /* ny */
} sample;

static double taper(double d, double width) {
  const double pi = 3.14159265358979323846;
  double s;
  if (width <= 0.0 || d >= width) return 1.0;
  if (d <= 0.0) return 0.0;
  s = sin(0.5 * pi * d / width);
  return s * s;
}

static double dist(double p, double l) { return p < l - p ? p : l - p; }

static void fill(double* w, int count, double offset, double h, double l, double width) {
  int i;
  for (i = 0; i < count; ++i) w[i] = taper(dist(h * ((double)i + offset), l), width);
}

static int sample_create(const plateau_setup* s, const double* values, void** instance, char* err,
                         size_t err_len) {
  sample* c = (sample*)calloc(1, sizeof(sample));
  double munk;
  if (c == NULL) {
    snprintf(err, err_len, "out of memory");
    return 1;
  }
  c->nx = s->nx;
  c->ny = s->ny;
  c->n_layers = s->n_layers;
  c->dx = s->dx;
  c->dy = s->dy;
  c->k = values[0];
  munk = (s->viscosity > 0.0 && s->beta > 0.0) ? cbrt(s->viscosity / s->beta) : 0.0;
  c->width = values[1] > 0.0 ? 1000.0 * values[1] : fmax(2.0 * fmax(s->dx, s->dy), munk);
  c->wx_node = (double*)malloc(sizeof(double) * (size_t)(s->nx + 1));
  c->wx_face = (double*)malloc(sizeof(double) * (size_t)s->nx);
  c->wy_node = (double*)malloc(sizeof(double) * (size_t)(s->ny + 1));
  c->wy_face = (double*)malloc(sizeof(double) * (size_t)s->ny);
  if (!c->wx_node || !c->wx_face || !c->wy_node || !c->wy_face) {
    snprintf(err, err_len, "out of memory");
    free(c->wx_node);
    free(c->wx_face);
    free(c->wy_node);
    free(c->wy_face);
    free(c);
    return 1;
  }
  fill(c->wx_node, s->nx + 1, 0.0, s->dx, s->dx * s->nx, c->width);
  fill(c->wx_face, s->nx, 0.5, s->dx, s->dx * s->nx, c->width);
  fill(c->wy_node, s->ny + 1, 0.0, s->dy, s->dy * s->ny, c->width);
  fill(c->wy_face, s->ny, 0.5, s->dy, s->dy * s->ny, c->width);
  *instance = c;
  return 0;
}

static void sample_destroy(void* instance) {
  sample* c = (sample*)instance;
  free(c->wx_node);
  free(c->wx_face);
  free(c->wy_node);
  free(c->wy_face);
  free(c);
}

static int sample_fluxes(const void* instance, const plateau_state* state, double dt,
                         plateau_fluxes* out, char* err, size_t err_len) {
  const sample* c = (const sample*)instance;
  const int nx = c->nx;
  const int ny = c->ny;
  const int rows = nx + 1; /* node stride */
  const double ix = 1.0 / c->dx;
  const double iy = 1.0 / c->dy;
  int k, i, j;
  (void)dt;
  (void)err;
  (void)err_len;
  for (k = 0; k < c->n_layers; ++k) {
    const double* q = state->q[k];
    double* fx = out->fx[k];
    double* fy = out->fy[k];
    /* x-faces between interior nodes i and i+1 of rows 1..ny-1 */
    for (j = 1; j < ny; ++j) {
      for (i = 1; i < nx - 1; ++i) {
        const double kf = c->k * c->wx_face[i] * c->wy_node[j];
        fx[i + nx * j] = -kf * (q[(i + 1) + rows * j] - q[i + rows * j]) * ix;
      }
    }
    /* y-faces between interior nodes j and j+1 of columns 1..nx-1 */
    for (j = 1; j < ny - 1; ++j) {
      for (i = 1; i < nx; ++i) {
        const double kf = c->k * c->wx_node[i] * c->wy_face[j];
        fy[i + rows * j] = -kf * (q[i + rows * (j + 1)] - q[i + rows * j]) * iy;
      }
    }
  }
  out->k_max = c->k;
  return 0;
}

static double sample_bound(const void* instance) { return ((const sample*)instance)->k; }
static double sample_width(const void* instance) { return ((const sample*)instance)->width; }

static int sample_diagnose(const void* instance, const plateau_state* state, double* const* out,
                           char* err, size_t err_len) {
  const sample* c = (const sample*)instance;
  int k, i, j;
  (void)state;
  (void)err;
  (void)err_len;
  for (k = 0; k < c->n_layers; ++k) {
    for (j = 0; j <= c->ny; ++j) {
      for (i = 0; i <= c->nx; ++i) {
        out[k][i + (c->nx + 1) * j] = c->k * c->wx_node[i] * c->wy_node[j];
      }
    }
  }
  return 0;
}

static const plateau_param_decl kParams[] = {
    {"k_m2_per_s", "m2 s-1", PLATEAU_PARAM_REAL, 800.0, 1.0, 1e5, NULL, 0, "eddy diffusivity K", 1,
     1},
    {"taper_km", "km", PLATEAU_PARAM_REAL, 0.0, 0.0, 5000.0, NULL, 0,
     "wall taper width; 0: max(2 grid intervals, Munk width)", 0, 0},
};

static const plateau_field_decl kDiagnostics[] = {
    {"sample_k", "m2 s-1", "diffusivity of the sample closure (wall taper applied)",
     PLATEAU_PLACE_LAYER},
};

static const plateau_closure_api kApi = {
    PLATEAU_CLOSURE_ABI_VERSION,
    (uint32_t)sizeof(plateau_closure_api),
    "sample_constant_pv",
    "F = -K w grad q (full PV, wall taper w), an external sample",
    "tests/plugins/sample_closure.c; Rhines and Young (1982), J. Fluid Mech. 122",
    PLATEAU_TARGET_FULL_PV,
    1,
    kParams,
    2,
    kDiagnostics,
    1,
    sample_create,
    sample_destroy,
    sample_fluxes,
    sample_bound,
    sample_width,
    sample_diagnose,
};

SAMPLE_EXPORT const plateau_closure_api* plateau_closure_entry(void) { return &kApi; }
