// The checks of the validation report (docs/validation.md), by topic. Each returns one
// CheckResult per published value of CHECK_VALUES.md it covers.
#pragma once

#include <vector>

#include "validation/check.hpp"
#include "validation/cohort.hpp"

namespace stethogen::validation {

std::vector<CheckResult> rest_hemodynamics_checks(const Cohort& cohort);
std::vector<CheckResult> systolic_interval_checks(const Cohort& cohort);
std::vector<CheckResult> exercise_checks(const Cohort& cohort);
std::vector<CheckResult> failure_checks(const Cohort& cohort);
std::vector<CheckResult> respiration_checks(const Cohort& cohort);
std::vector<CheckResult> sound_timing_checks(const Cohort& cohort);
std::vector<CheckResult> sound_amplitude_checks(const Cohort& cohort);
std::vector<CheckResult> signal_checks(const Cohort& cohort);

// All of the above, in report order.
std::vector<CheckResult> all_checks(const Cohort& cohort);

}  // namespace stethogen::validation
