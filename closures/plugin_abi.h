/* The C interface of an external closure: a shared library that exports one function,
 *
 *     const plateau_closure_api* plateau_closure_entry(void);
 *
 * returning a table of plain C function pointers and declarations. Only C types cross the
 * boundary (no C++ classes, exceptions or allocators), so a plug-in built by another compiler,
 * or written in C, loads into any plateau of the same interface version. plateau checks
 * abi_version against PLATEAU_CLOSURE_ABI_VERSION and struct_size before it calls anything.
 *
 * Layout (as closures/closure.hpp): node arrays hold (nx+1)*(ny+1) doubles, x fastest, node
 * (i, j) at [i + (nx+1) j]; x-face arrays nx*(ny+1), face (i, j) between nodes (i, j) and
 * (i+1, j) at [i + nx j]; y-face arrays (nx+1)*ny, face (i, j) between (i, j) and (i, j+1) at
 * [i + (nx+1) j]. plateau zeroes the faces next to the walls after the call and takes the
 * divergence itself. SI units throughout. Layers and interfaces count from the top.
 *
 * Threads: plateau never calls one closure instance from two threads at once; fluxes() must
 * give the same bits for the same input (no time, no random numbers without a fixed seed).
 */
#ifndef PLATEAU_CLOSURES_PLUGIN_ABI_H
#define PLATEAU_CLOSURES_PLUGIN_ABI_H

#include <stddef.h>
#include <stdint.h>

#ifdef __cplusplus
extern "C" {
#endif

#define PLATEAU_CLOSURE_ABI_VERSION 1u
#define PLATEAU_CLOSURE_ENTRY_SYMBOL "plateau_closure_entry"

/* Parameter kinds. */
enum {
  PLATEAU_PARAM_REAL = 0,
  PLATEAU_PARAM_INTEGER = 1,
  PLATEAU_PARAM_BOOLEAN = 2,
  PLATEAU_PARAM_CHOICE = 3
};

/* What the closure diffuses. */
enum { PLATEAU_TARGET_FULL_PV = 0, PLATEAU_TARGET_STRETCHING = 1 };

/* Where a diagnostic field lives. */
enum { PLATEAU_PLACE_LAYER = 0, PLATEAU_PLACE_INTERFACE = 1, PLATEAU_PLACE_COLUMN = 2 };

/* One declared parameter. Values reach create() as doubles in declaration order: a real or an
 * integer as itself, a boolean as 0 or 1, a choice as the index into `choices`. */
typedef struct plateau_param_decl {
  const char* name;     /* e.g. "k_m2_per_s" */
  const char* unit;     /* e.g. "m2 s-1"; "1" dimensionless; "" for boolean, choice */
  int kind;             /* PLATEAU_PARAM_* */
  double default_value; /* real, integer, boolean; the default index for a choice */
  double min_value;     /* real, integer: the closed range [min_value, max_value] */
  double max_value;
  const char* const* choices; /* choice: n_choices names */
  int n_choices;
  const char* meaning; /* one line */
  int tunable;         /* nonzero: `tune` may vary it */
  int log_scale;       /* nonzero: `tune` searches it in log space */
} plateau_param_decl;

/* A diagnostic field the closure can write (its K map, say). */
typedef struct plateau_field_decl {
  const char* name; /* NetCDF variable name */
  const char* units;
  const char* long_name;
  int placement; /* PLATEAU_PLACE_* */
} plateau_field_decl;

/* The constants of a run. The arrays stay valid until destroy(). */
typedef struct plateau_setup {
  int nx, ny, n_layers;
  double dx, dy;                   /* m */
  double y0;                       /* m from the southern wall */
  double f0, beta;                 /* s^-1, m^-1 s^-1 */
  const double* thickness;         /* n_layers values, m */
  const double* reduced_gravity;   /* n_layers - 1 values, m s^-2 */
  const double* deformation_radii; /* n_layers - 1 values, m, largest first */
  double dt;                       /* s */
  double viscosity;                /* the grid's Laplacian viscosity A2, m^2 s^-1 */
} plateau_setup;

/* A read-only view of the resolved state. */
typedef struct plateau_state {
  const double* const* psi; /* n_layers node arrays, m^2 s^-1 */
  const double* const* q;   /* n_layers node arrays, full PV, s^-1 */
  const double* wall_psi;   /* n_layers wall values c_k */
  double t;                 /* model time, s */
} plateau_state;

/* Flux output, arriving zeroed. */
typedef struct plateau_fluxes {
  double* const* fx; /* n_layers x-face arrays, m s^-2 */
  double* const* fy; /* n_layers y-face arrays */
  double k_max;      /* out: the largest diffusivity used, m^2 s^-1 (sub-stepping) */
} plateau_fluxes;

/* Every function returns 0 on success; otherwise it writes a message of at most err_len bytes
 * (NUL included) into err. */
typedef struct plateau_closure_api {
  uint32_t abi_version; /* PLATEAU_CLOSURE_ABI_VERSION */
  uint32_t struct_size; /* sizeof(plateau_closure_api) */
  const char* name;     /* registry name: letters, digits, '_', '-' */
  const char* summary;  /* one line: the formula */
  const char* source;   /* the published source */
  int target;           /* PLATEAU_TARGET_* */
  int down_gradient;    /* nonzero: sum of F . grad q~ <= 0 is promised (tested) */
  const plateau_param_decl* params;
  int n_params;
  const plateau_field_decl* diagnostics; /* may be NULL */
  int n_diagnostics;

  /* A new instance for this run with these parameter values (n_params doubles). */
  int (*create)(const plateau_setup* setup, const double* param_values, void** instance, char* err,
                size_t err_len);
  void (*destroy)(void* instance);
  /* Fluxes of `state` for a step of dt seconds. Must not change the instance. */
  int (*fluxes)(const void* instance, const plateau_state* state, double dt, plateau_fluxes* out,
                char* err, size_t err_len);
  /* The largest diffusivity this instance can produce, m^2 s^-1. */
  double (*diffusivity_bound)(const void* instance);
  /* The wall taper width, m (0: none). May be NULL. */
  double (*wall_taper_width)(const void* instance);
  /* Diagnostic fields for `state`: out holds one node array per layer, interface or column
   * entry of each declared field, fields in declaration order. May be NULL. */
  int (*diagnose)(const void* instance, const plateau_state* state, double* const* out, char* err,
                  size_t err_len);
} plateau_closure_api;

typedef const plateau_closure_api* (*plateau_closure_entry_fn)(void);

#ifdef __cplusplus
}
#endif

#endif /* PLATEAU_CLOSURES_PLUGIN_ABI_H */
