// none: no eddy flux. The coarse model keeps only its lateral friction; the baseline every
// score is compared with (CLOSURES.md, family 1).

#include <memory>

#include "closures/closure.hpp"

namespace plateau::closure {
namespace {

class NoClosure final : public Closure {
 public:
  [[nodiscard]] Target target() const override { return Target::full_pv; }
  void fluxes(const StateView& /*s*/, double /*dt_s*/, Fluxes& out,
              Scratch& /*scratch*/) const override {
    out.k_max = 0.0;
  }
  [[nodiscard]] double diffusivity_bound() const override { return 0.0; }
};

const Registrar kRegisterNone{
    Info{"none",
         "F = 0: no eddy flux (the coarse model's lateral friction only)",
         "the baseline of every comparison",
         {},
         true,
         [](const Params& /*p*/, const Setup& /*s*/) -> std::unique_ptr<Closure> {
           return std::make_unique<NoClosure>();
         }}};

}  // namespace
}  // namespace plateau::closure
