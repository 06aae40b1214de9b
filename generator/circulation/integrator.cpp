#include "generator/circulation/integrator.hpp"

#include <algorithm>
#include <cmath>
#include <exception>

#include <fmt/format.h>

#include "core/error.hpp"

namespace stethogen::gen {

namespace odeint = boost::numeric::odeint;

Integrator::Integrator(const CirculationModel& model, const CirculationState& x0, double t0_s,
                       const IntegratorSettings& settings, std::string record_id, std::string context)
    : model_(model),
      settings_(settings),
      record_id_(std::move(record_id)),
      context_(std::move(context)),
      stepper_(Stepper::controlled_stepper_type(
          Stepper::controlled_stepper_type::error_checker_type(settings.abs_tolerance, settings.rel_tolerance),
          PiStepAdjuster(settings.max_step_s))) {
  stepper_.initialize(x0, t0_s, 1e-4);
}

namespace {
// Hairer's DOPRI5 defaults: safety factor, growth and shrink limits, and the exponents of the
// current and the previous error (beta = 0.04, alpha = 1/5 - 0.75 beta).
constexpr double kSafety = 0.9, kMaxGrowth = 10.0, kMaxShrink = 0.2, kBeta = 0.04, kAlpha = 0.2 - 0.75 * kBeta;
}  // namespace

double PiStepAdjuster::decrease_step(double dt, double error, int) {
  rejected_ = true;
  dt *= std::max(kSafety / std::pow(error, kAlpha), kMaxShrink);
  return max_dt_s_ > 0 ? std::min(dt, max_dt_s_) : dt;
}

double PiStepAdjuster::increase_step(double dt, double error, int) {
  // kSafety previous^beta / error^alpha, from one logarithm per step (the previous one is kept).
  const double log_error = std::log(error);
  double factor = kSafety * std::exp(kBeta * previous_log_error_ - kAlpha * log_error);
  factor = std::clamp(factor, kMaxShrink, kMaxGrowth);
  if (rejected_) factor = std::min(factor, 1.0);
  rejected_ = false;
  previous_log_error_ = error > 1e-4 ? log_error : kLogErrorFloor;
  dt *= factor;
  return max_dt_s_ > 0 ? std::min(dt, max_dt_s_) : dt;
}

void Integrator::fail(const std::string& reason) const {
  throw RecordFailure(record_id_, fmt::format("circulation failed at simulated t = {:.6f} s after {} steps: {} ({})",
                                              stepper_.current_time(), steps_, reason, context_));
}

std::pair<double, double> Integrator::checked_step() {
  if (steps_ >= settings_.max_steps) fail(fmt::format("step limit of {} reached", settings_.max_steps));
  std::pair<double, double> span;
  try {
    span = stepper_.do_step(System{&model_});
  } catch (const std::exception& e) {
    fail(fmt::format("step size control gave up ({})", e.what()));
  }
  ++steps_;
  const CirculationState& x = stepper_.current_state();
  for (int i = 0; i < kStateSize; ++i) {
    if (!std::isfinite(x[i])) fail(fmt::format("state component {} is not finite", i));
  }
  for (int i = kVla; i <= kVpv; ++i) {
    if (x[i] < 0.0) fail(fmt::format("volume component {} became negative ({:.3f} mL)", i, x[i]));
  }
  if (span.second - span.first < settings_.min_step_s && stepper_.current_time_step() < settings_.min_step_s)
    fail(fmt::format("step size fell to {:.3g} s", stepper_.current_time_step()));
  return span;
}

void Integrator::state_at(double t_s, CirculationState& x) const { stepper_.calc_state(t_s, x); }

}  // namespace stethogen::gen
