// A self-contained JSON description of one engine run (parameters, activation pulses, breaths,
// hand-over state) so that an independent integrator can solve the same equations
// (validation/circulation_reference.py).
#pragma once

#include <string>

#include "generator/circulation/simulate.hpp"

namespace stethogen::gen {

// The case covers [series start, end_s] from the state at the series start; sample_times_s are
// where the reference reports pressures.
std::string reference_case_json(const EngineRun& run, double end_s, const std::vector<double>& sample_times_s);

}  // namespace stethogen::gen
