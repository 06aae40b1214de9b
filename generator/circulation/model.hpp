// The closed-loop circulation as an ODE system: a fixed-size state and a right-hand side that
// allocates nothing (it runs hundreds of thousands of times per record).
#pragma once

#include <array>
#include <cstdint>

#include "generator/circulation/activation.hpp"
#include "generator/circulation/parameters.hpp"
#include "generator/rhythm/respiration.hpp"

namespace stethogen::gen {

// State layout: volumes (mL), inertial flows (mL/s), leaflet states (0..1).
enum StateIndex : int {
  kVla, kVlv, kVra, kVrv,             // chambers
  kVao, kVsa, kVsv, kVtv,             // aorta, systemic arteries, systemic veins, thoracic veins
  kVpa, kVlu, kVpv,                   // pulmonary artery, lung arteries, pulmonary veins
  kQmi, kQao, kQtr, kQpu,             // valve flows
  kQsa, kQpa,                         // flow through the aortic and pulmonary inertances
  kZmi, kZao, kZtr, kZpu,             // leaflet states (Mynard et al. 2012)
  kStateSize
};
using CirculationState = std::array<double, kStateSize>;

// Algebraic quantities at one instant (absolute pressures, mmHg).
struct ModelOutputs {
  double p_la, p_lv, p_ra, p_rv;
  double p_ao, p_sa, p_sv, p_tv, p_pa, p_lu, p_pv;
  double p_thorax, p_pericardium;
  std::array<double, 4> activation;  // indexed by Chamber
};

class CirculationModel {
 public:
  CirculationModel(const CirculationParams& params, const ActivationPlan* activation,
                   const Respiration* respiration);

  void outputs(const CirculationState& x, double t_s, ModelOutputs& out) const;
  void rhs(const CirculationState& x, CirculationState& dxdt, double t_s) const;

  const CirculationParams& params() const { return p_; }
  std::uint64_t rhs_evaluations() const { return rhs_evaluations_; }

 private:
  struct ValveCoefficients {
    double bernoulli_factor;  // rho / (2 * 1333.22): B = factor / A^2, mmHg s^2 cm^4 / mL^2
    double inverse_inertance_factor;  // 1333.22 / (rho * l): 1 / L = A x this, mL / (mmHg s^2 cm^2)
    double area_open_cm2, area_closed_cm2, k_open, k_close, dp_open, dp_close;
  };
  // Reciprocals of the fixed compliances (mmHg/mL), resistances (mL/(mmHg s)) and inertances,
  // so that the right-hand side multiplies: divisions are slow and lie on its dependency chains.
  struct Reciprocals {
    double aorta, systemic_arteries, systemic_veins, thoracic_veins, pulmonary_artery, lung_arteries,
        pulmonary_veins;
    double systemic, venous, caval, pulmonary, aortic_inertance, pulmonary_inertance;
  };
  static ValveCoefficients coefficients(const ValveParams& v, double density);
  static void valve(const ValveCoefficients& c, double dp, double q, double zeta, double& dq, double& dzeta);

  CirculationParams p_;
  const ActivationPlan* activation_;
  const Respiration* respiration_;
  std::array<ValveCoefficients, 4> valves_;  // mitral, aortic, tricuspid, pulmonic
  Reciprocals inverse_;
  mutable std::uint64_t rhs_evaluations_ = 0;
  mutable ActivationCursor activation_cursor_;  // search start and last values
  mutable std::size_t breath_hint_ = 0;         // search start of the breath lookup
};

// Total blood volume held in the state (conserved by the equations).
double total_volume_ml(const CirculationState& x);

// A state with plausible resting pressures, scaled so that its volume equals the blood volume.
CirculationState initial_state(const CirculationParams& p);

}  // namespace stethogen::gen
