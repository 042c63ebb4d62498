/* A plug-in whose closure takes a built-in's name: plateau must refuse the clash. */

#include "closures/plugin_abi.h"

static int create(const plateau_setup* s, const double* v, void** instance, char* e, size_t n) {
  (void)s;
  (void)v;
  (void)e;
  (void)n;
  *instance = 0;
  return 1;
}
static void destroy(void* instance) { (void)instance; }
static int fluxes(const void* instance, const plateau_state* s, double dt, plateau_fluxes* o,
                  char* e, size_t n) {
  (void)instance;
  (void)s;
  (void)dt;
  (void)o;
  (void)e;
  (void)n;
  return 0;
}
static double bound(const void* instance) {
  (void)instance;
  return 0.0;
}

static const plateau_closure_api kApi = {PLATEAU_CLOSURE_ABI_VERSION,
                                         (uint32_t)sizeof(plateau_closure_api),
                                         "constant",
                                         "",
                                         "",
                                         PLATEAU_TARGET_FULL_PV,
                                         1,
                                         0,
                                         0,
                                         0,
                                         0,
                                         create,
                                         destroy,
                                         fluxes,
                                         bound,
                                         0,
                                         0};

__attribute__((visibility("default"))) const plateau_closure_api* plateau_closure_entry(void) {
  return &kApi;
}
