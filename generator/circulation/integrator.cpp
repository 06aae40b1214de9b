#include "generator/circulation/integrator.hpp"

#include <cmath>

#include <fmt/format.h>

#include "core/error.hpp"

namespace stethogen::gen {

namespace {
constexpr double kFirstStepS = 1e-4;
}  // namespace

Integrator::Integrator(const CirculationModel& model, const CirculationState& x0, double t0_s,
                       const IntegratorSettings& settings, std::string record_id, std::string context)
    : settings_(settings),
      record_id_(std::move(record_id)),
      context_(std::move(context)),
      stepper_(System{&model}, x0, t0_s, kFirstStepS,
               Dopri5Control{settings.abs_tolerance, settings.rel_tolerance, settings.max_step_s}) {}

void Integrator::fail(const std::string& reason) const {
  throw RecordFailure(record_id_, fmt::format("circulation failed at simulated t = {:.6f} s after {} steps: {} ({})",
                                              stepper_.time_s(), steps_, reason, context_));
}

std::pair<double, double> Integrator::checked_step() {
  if (steps_ >= settings_.max_steps) fail(fmt::format("step limit of {} reached", settings_.max_steps));
  if (!stepper_.step())
    fail(fmt::format("step size control gave up ({} attempts in a row rejected, last step {:.3g} s)",
                     Dopri5Control{}.max_rejections, stepper_.step_size_s()));
  ++steps_;
  const CirculationState& x = stepper_.state();
  for (int i = 0; i < kStateSize; ++i) {
    if (!std::isfinite(x[i])) fail(fmt::format("state component {} is not finite", i));
  }
  for (int i = kVla; i <= kVpv; ++i) {
    if (x[i] < 0.0) fail(fmt::format("volume component {} became negative ({:.3f} mL)", i, x[i]));
  }
  const double t_prev = stepper_.previous_time_s(), t_now = stepper_.time_s();
  if (t_now - t_prev < settings_.min_step_s && stepper_.step_size_s() < settings_.min_step_s)
    fail(fmt::format("step size fell to {:.3g} s", stepper_.step_size_s()));
  return {t_prev, t_now};
}

}  // namespace stethogen::gen
