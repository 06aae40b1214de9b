// The circulation's integrator: the Dormand-Prince 5(4) pair with its dense output (dopri5.hpp)
// on the model's right-hand side, wrapped: bounded step count, and a stall, a non-finite state
// or a negative volume becomes a RecordFailure naming the record, the simulated time and the
// context.
#pragma once

#include <cstdint>
#include <string>
#include <utility>

#include "generator/circulation/dopri5.hpp"
#include "generator/circulation/model.hpp"

namespace stethogen::gen {

struct IntegratorSettings {
  double abs_tolerance = 1e-5;
  double rel_tolerance = 1e-5;
  // Bounds the steps through the long, smooth diastole; accuracy sets the step elsewhere. 5 ms
  // cost 8 % more RHS evaluations for valve transitions within 0.07 ms of these.
  double max_step_s = 0.010;
  double min_step_s = 1e-9;        // a smaller accepted step counts as a stall
  std::uint64_t max_steps = 2'000'000;
};

class Integrator {
 public:
  // context: record id and key parameters, quoted in any failure.
  Integrator(const CirculationModel& model, const CirculationState& x0, double t0_s,
             const IntegratorSettings& settings, std::string record_id, std::string context);

  // Takes steps until the current time reaches t_end_s; after each step calls on_step(t_prev, t_now),
  // during which state_at() and component_at() interpolate anywhere in [t_prev, t_now].
  template <class OnStep>
  void advance_to(double t_end_s, OnStep&& on_step) {
    while (stepper_.time_s() < t_end_s) {
      const auto [t_prev, t_now] = checked_step();
      on_step(t_prev, t_now);
    }
  }

  void state_at(double t_s, CirculationState& x) const { stepper_.state_at(t_s, x); }
  double component_at(double t_s, int i) const { return stepper_.component_at(t_s, static_cast<std::size_t>(i)); }
  // Continues from x at t_s, a state changed outside the equations (the step count goes on).
  void restart(const CirculationState& x, double t_s) { stepper_.restart(x, t_s); }
  double time_s() const { return stepper_.time_s(); }
  const CirculationState& state() const { return stepper_.state(); }
  std::uint64_t steps() const { return steps_; }
  [[noreturn]] void fail(const std::string& reason) const;

 private:
  struct System {
    const CirculationModel* model;
    void operator()(const CirculationState& x, CirculationState& dxdt, double t) const { model->rhs(x, dxdt, t); }
  };
  std::pair<double, double> checked_step();

  IntegratorSettings settings_;
  std::string record_id_, context_;
  Dopri5<System, kStateSize> stepper_;
  std::uint64_t steps_ = 0;
};

}  // namespace stethogen::gen
