// What the integrator settings cost and change: record 0's engine run with other settings
// against the defaults (CPU time, steps, largest valve-transition shift). For choosing
// settings; the pipeline always uses the defaults.
#include <cmath>

#include <fmt/format.h>

#include "bench/bench.hpp"
#include "generator/circulation/simulate.hpp"
#include "recipe/plan.hpp"

namespace stethogen::bench {

void compare_engine_settings(const recipe::Recipe& recipe, double max_step_s, double tolerance) {
  const SubjectSpec subject = recipe::plan_record(recipe, 0);
  gen::IntegratorSettings other;
  other.max_step_s = max_step_s;
  other.abs_tolerance = other.rel_tolerance = tolerance;
  double c0 = thread_cpu_s();
  const gen::EngineRun base = gen::run_engine(subject);
  double c1 = thread_cpu_s();
  const gen::EngineRun alt = gen::run_engine(subject, other);
  double c2 = thread_cpu_s();
  const auto& a = base.result.transitions;
  const auto& b = alt.result.transitions;
  double worst = 0;
  for (const gen::ValveTransition& e : a) {
    double best = INFINITY;
    for (const gen::ValveTransition& f : b)
      if (f.valve == e.valve && f.opening == e.opening) best = std::min(best, std::fabs(f.time_s - e.time_s));
    worst = std::max(worst, best);
  }
  const gen::IntegratorSettings defaults;
  fmt::print("\nEngine settings (record 0): default max step {:.1f} ms, tolerance {:.0e}: {:.1f} ms CPU, {} steps\n",
             1e3 * defaults.max_step_s, defaults.rel_tolerance, 1e3 * (c1 - c0), base.result.ode_steps);
  fmt::print("  max step {:.1f} ms, tolerance {:.0e}: {:.1f} ms CPU, {} steps, {} vs {} transitions, largest shift "
             "{:.4f} ms\n",
             1e3 * max_step_s, tolerance, 1e3 * (c2 - c1), alt.result.ode_steps, b.size(), a.size(), 1e3 * worst);
}

}  // namespace stethogen::bench
