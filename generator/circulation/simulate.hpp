// simulate_circulation: one subject's closed-loop hemodynamics, from the state mapping through
// the run-in to the recorded series, valve transitions and per-beat physiology.
#pragma once

#include "core/subject.hpp"
#include "generator/circulation/activation.hpp"
#include "generator/circulation/integrator.hpp"
#include "generator/hemodynamics.hpp"
#include "generator/rhythm/beat_schedule.hpp"
#include "generator/states/state_mapping.hpp"

namespace stethogen::gen {

// Rate of the dense series handed to the sources (Hz): high enough for the derivatives they take.
inline constexpr double kSeriesRateHz = 2000.0;
// A valve counts as open while its leaflet state exceeds this value (5 % of the open area) and as
// closed below it; transitions are the crossings, located on the dense output to ~1e-7 s.
inline constexpr double kLeafletOpenThreshold = 0.05;
// The run-in at constant rate and pleural pressure ends when the volumes at successive
// Q-wave instants change by less than this (mL) ...
inline constexpr double kRunInToleranceMl = 0.1;
// ... or fails after this many beats.
inline constexpr int kMaxRunInBeats = 300;

// Throws InputError for an invalid subject, RecordFailure if the integration fails.
CirculationResult simulate_circulation(const SubjectSpec& subject);

// Everything behind one result, for the independent reference integration and the benchmark.
struct EngineRun {
  EngineSetup setup;
  RhythmPlan rhythm;
  ActivationPlan activation;
  double recording_start_s = 0;     // where the run-in state is handed over (before the series)
  CirculationState recording_start_state{};
  double steady_lv_volume_ml = 0, steady_rv_volume_ml = 0;  // at Q after the run-in
  CirculationState series_start_state{};  // at result.series.t0_s
  int run_in_beats = 0;
  CirculationResult result;
};

EngineRun run_engine(const SubjectSpec& subject, const IntegratorSettings& settings = {});

}  // namespace stethogen::gen
