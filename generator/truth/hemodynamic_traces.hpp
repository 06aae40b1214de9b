// The hemodynamic traces stored beside the sounds: the circulation's dense series decimated to a
// display rate (band-limited: the FIR of scipy.signal.resample_poly, evaluated at the record
// grid's phase) and cut to the record window [0, duration).
#pragma once

#include "core/record.hpp"
#include "generator/hemodynamics.hpp"

namespace stethogen::gen {

inline constexpr double kTraceRateHz = 250.0;

// Channels: LV, aortic, LA, RV, pulmonary, RA pressure (mmHg); LV, RV volume (mL); mitral,
// tricuspid, aortic, pulmonic flow (mL/s, positive forward).
// The series rate must be a whole multiple of rate_hz (RuntimeFailure otherwise).
HemodynamicTraces hemodynamic_traces(const CirculationResult& circulation, double rate_hz = kTraceRateHz);

}  // namespace stethogen::gen
