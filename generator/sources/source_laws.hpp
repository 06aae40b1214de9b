// The laws that turn a beat's hemodynamics into a sound component: loudness from a drive (the
// rate of change of the pressure or flow that arrests the leaflets or the inflow), pitch from the
// load on the closed valve or the wall, decay from damping. Constants and their grounding are
// documented in docs/sounds.md ("Sources").
#pragma once

#include "core/types.hpp"

namespace stethogen::gen {

struct SourceLaw {
  // amplitude = gain_au * (drive / drive_ref) ^ drive_exponent
  double gain_au;
  double drive_ref;
  double drive_exponent;
  // f_end = pitch_ref_hz * (load / load_ref_mmhg) ^ pitch_exponent; f_start = chirp_ratio * f_end
  double pitch_ref_hz;
  double load_ref_mmhg;
  double pitch_exponent;
  double chirp_ratio;
  // envelope time constant tau = 1 / (2 pi damping_ratio f_end): a damped oscillator's decay
  double damping_ratio;
};

// Valve closures: drive and gain are shared by the left and right valve of a pair, so that
// "left louder than right" follows from the pressures, not from a per-side constant.
//  M1/T1: drive = peak d(ventricle - atrium)/dt from closure to semilunar opening, mmHg/s
//         (S1 amplitude tracks LV dP/dt: a 1965 canine study, Circ Res 16:45, from memory);
//         load = ventricular pressure at semilunar opening (held by the closed AV leaflets).
//  A2/P2: drive = arterial pressure at closure minus the ventricular pressure when the AV valve
//         reopens, mmHg: the diastolic load the closed leaflets take up (Kusukawa et al. 1966,
//         J Appl Physiol 21:938, from memory; loud A2/P2 in systemic/pulmonary hypertension,
//         trade fact); load = arterial pressure at closure.
//  Pitch ~ sqrt(load): a membrane under tension, f ~ sqrt(T/m), T ~ pressure * radius (Laplace).
inline constexpr SourceLaw kLawM1{1.0, 1500.0, 1.0, 45.0, 80.0, 0.5, 1.5, 0.30};
inline constexpr SourceLaw kLawT1{1.0, 1500.0, 1.0, 40.0, 10.0, 0.5, 1.5, 0.30};
inline constexpr SourceLaw kLawA2{0.5, 90.0, 1.0, 55.0, 95.0, 0.5, 1.8, 0.30};
inline constexpr SourceLaw kLawP2{0.5, 90.0, 1.0, 50.0, 18.0, 0.5, 1.8, 0.30};
// Filling sounds: present in every beat, faint in a compliant heart, louder when the ventricle
// is stiff or overfilled (pitch 20-50 Hz: Abrams 1978, JAMA 239:2790, from memory).
//  S3: drive = peak deceleration of the early inflow through the mitral valve, mL/s^2 (S3 from
//      the abrupt deceleration of rapid filling: Van de Werf et al. 1984, Circulation 69:1070,
//      from memory); load = LV pressure at that instant (wall stiffness).
//  S4: drive = peak deceleration of the atrial (A-wave) inflow, mL/s^2: the same inflow is
//      checked faster by a stiffer ventricle; load = LV pressure at that instant.
inline constexpr SourceLaw kLawS3{0.05, 6000.0, 1.0, 32.0, 8.0, 0.25, 1.0, 0.50};
inline constexpr SourceLaw kLawS4{0.05, 3000.0, 1.0, 25.0, 10.0, 0.25, 1.0, 0.50};

inline constexpr int kComponentCount = 6;  // M1, T1, A2, P2, S3, S4 (EventKind order)
inline int component_index(EventKind kind) { return static_cast<int>(kind); }

}  // namespace stethogen::gen
