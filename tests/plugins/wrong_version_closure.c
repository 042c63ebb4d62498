/* A plug-in built for another interface version: plateau must refuse it by its version number
 * before calling anything in it. */

#include "closures/plugin_abi.h"

static const plateau_closure_api kApi = {PLATEAU_CLOSURE_ABI_VERSION + 41u,
                                         (uint32_t)sizeof(plateau_closure_api),
                                         "wrong_version",
                                         "",
                                         "",
                                         PLATEAU_TARGET_FULL_PV,
                                         1,
                                         0,
                                         0,
                                         0,
                                         0,
                                         0,
                                         0,
                                         0,
                                         0,
                                         0,
                                         0};

__attribute__((visibility("default"))) const plateau_closure_api* plateau_closure_entry(void) {
  return &kApi;
}
