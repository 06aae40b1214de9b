// Speed of the engine (a measurement, not a check: hidden, run with `test_circulation "[.benchmark]"`).
#include <catch2/catch.hpp>

#include <ctime>
#include <iostream>

#include "engine_helpers.hpp"

using namespace stethogen;
using namespace stethogen::gen;
using namespace stethogen::gen::test;

TEST_CASE("engine speed at rest and at peak exercise", "[.benchmark]") {
  for (const auto& [state, level] : {std::pair{State::rest, 0.0}, std::pair{State::exercise, 1.0}}) {
    const SubjectSpec s = subject(state, level, 30.0);
    const std::clock_t start = std::clock();
    const CirculationResult r = simulate_circulation(s);
    const double cpu_s = static_cast<double>(std::clock() - start) / CLOCKS_PER_SEC;
    // Beats integrated: run-in beats are not reported separately, so count recorded ones.
    const double beats = static_cast<double>(r.beats.size());
    std::cout << name(state) << " " << level << ": " << r.duration_s / cpu_s << " recorded s per CPU s, "
              << r.ode_steps << " steps (" << r.ode_steps / beats << " per recorded beat incl. run-in), "
              << r.rhs_evaluations / r.duration_s << " RHS evaluations per recorded s, " << cpu_s * 1e3
              << " ms CPU\n";
  }
}
