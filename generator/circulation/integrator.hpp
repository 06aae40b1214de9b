// Boost.Odeint's adaptive Dormand-Prince 5(4) stepper with dense output (Dormand & Prince 1980,
// J Comput Appl Math 6:19), wrapped: bounded step count, and a stall, a non-finite state or a
// negative volume becomes a RecordFailure naming the record, the simulated time and the context.
#pragma once

#include <cstdint>
#include <string>

#include <boost/numeric/odeint.hpp>

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

// Step-size control for odeint's controlled stepper: the proportional-integral controller of
// Hairer's DOPRI5 (Hairer, Norsett & Wanner 1993, Solving Ordinary Differential Equations I,
// 2nd ed., section II.4; Gustafsson 1991, ACM Trans Math Softw 17:533): the new step follows the
// last two error estimates, grows at most 10x, and does not grow right after a rejection. With
// odeint's default (grow up to 5x while the error is below half the tolerance) one attempt in six
// was rejected, mostly where the valves open and close; with this one about one in eleven.
class PiStepAdjuster {
 public:
  explicit PiStepAdjuster(double max_dt_s = 0) : max_dt_s_(max_dt_s) {}
  double decrease_step(double dt, double error, int error_order);
  double increase_step(double dt, double error, int stepper_order);
  bool check_step_size_limit(double dt) const { return max_dt_s_ == 0 || dt <= max_dt_s_; }
  double get_max_dt() const { return max_dt_s_; }

 private:
  double max_dt_s_;
  static constexpr double kLogErrorFloor = -9.210340371976184;  // ln 1e-4: the previous error counts at least 1e-4
  double previous_log_error_ = kLogErrorFloor;                  // ln of the previous step's error
  bool rejected_ = false;
};

class Integrator {
 public:
  using Stepper = boost::numeric::odeint::dense_output_runge_kutta<boost::numeric::odeint::controlled_runge_kutta<
      boost::numeric::odeint::runge_kutta_dopri5<CirculationState>,
      boost::numeric::odeint::default_error_checker<double, boost::numeric::odeint::array_algebra,
                                                    boost::numeric::odeint::default_operations>,
      PiStepAdjuster>>;

  // context: record id and key parameters, quoted in any failure.
  Integrator(const CirculationModel& model, const CirculationState& x0, double t0_s,
             const IntegratorSettings& settings, std::string record_id, std::string context);

  // Takes steps until the current time reaches t_end_s; after each step calls on_step(t_prev, t_now),
  // during which state_at() interpolates anywhere in [t_prev, t_now].
  template <class OnStep>
  void advance_to(double t_end_s, OnStep&& on_step) {
    while (stepper_.current_time() < t_end_s) {
      const auto [t_prev, t_now] = checked_step();
      on_step(t_prev, t_now);
    }
  }

  void state_at(double t_s, CirculationState& x) const;
  // Continues from x at t_s, a state changed outside the equations (the step count goes on).
  void restart(const CirculationState& x, double t_s) { stepper_.initialize(x, t_s, stepper_.current_time_step()); }
  double time_s() const { return stepper_.current_time(); }
  const CirculationState& state() const { return stepper_.current_state(); }
  std::uint64_t steps() const { return steps_; }
  [[noreturn]] void fail(const std::string& reason) const;

 private:
  struct System {
    const CirculationModel* model;
    void operator()(const CirculationState& x, CirculationState& dxdt, double t) const { model->rhs(x, dxdt, t); }
  };
  std::pair<double, double> checked_step();

  const CirculationModel& model_;
  IntegratorSettings settings_;
  std::string record_id_, context_;
  mutable Stepper stepper_;
  std::uint64_t steps_ = 0;
};

}  // namespace stethogen::gen
