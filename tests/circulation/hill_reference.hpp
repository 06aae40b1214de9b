// Stergiopulos et al. 1996 (Am J Physiol 270:H2050), double-Hill activation, evaluated directly
// with std::pow as the general-purpose reference for the engine's fast forms.
#pragma once

#include <cmath>

#include "generator/circulation/activation.hpp"

namespace stethogen::gen::test {

inline double double_hill_with_pow(const ActivationPulse& p, double t_s) {
  const double u = t_s - p.onset_s;
  if (u <= 0.0 || u >= kHillCutoff * p.b_s) return 0.0;
  const double g1 = std::pow(u / p.a_s, p.m1), g2 = std::pow(u / p.b_s, p.m2);
  return p.norm * g1 / (1.0 + g1) / (1.0 + g2);
}

}  // namespace stethogen::gen::test
