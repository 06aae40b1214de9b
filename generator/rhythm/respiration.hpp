// Respiration as its own slow oscillator: a sequence of breaths with breath-to-breath period
// variation, each split into inspiration (fraction f of the breath) and expiration. Pleural
// (intrathoracic) pressure falls smoothly through inspiration and recovers in expiration.
#pragma once

#include <cstddef>
#include <vector>

#include "generator/circulation/fast_cosine.hpp"

namespace stethogen::gen {

class Respiration {
 public:
  Respiration() = default;  // apnoea at -4 mmHg
  // breath_starts_s: increasing start times of the breaths (start of inspiration); the last
  // entry closes the last breath. Outside the covered span breaths repeat with the nominal period.
  Respiration(std::vector<double> breath_starts_s, double nominal_period_s, double inspiration_fraction,
              double end_expiratory_mmhg, double depth_mmhg);
  // No breathing: pleural pressure held at a constant value.
  static Respiration apnoea(double pleural_mmhg);

  // Phase in [0, 1), 0 = start of inspiration.
  double phase(double t_s) const;
  // The same, with the breath index of the previous call as the search start (for callers that
  // ask for nearly increasing times; inline for the circulation's right-hand side).
  double phase(double t_s, std::size_t& breath_hint) const {
    const std::size_t k = breath_hint;
    if (k + 1 < starts_.size() && starts_[k] <= t_s && t_s < starts_[k + 1]) return phase_in_breath(t_s, k);
    return phase_searched(t_s, breath_hint);
  }
  bool inspiration(double t_s) const { return phase(t_s) < inspiration_fraction_; }
  // Depth shape in [0, 1]: 0 at end-expiration, 1 at end-inspiration; C1-continuous raised cosines.
  double swing(double ph) const {
    const double f = inspiration_fraction_;
    if (ph < f) return 0.5 * (1.0 - fast::cos_half_turn(ph * pi_over_inspiration_));
    return 0.5 * (1.0 + fast::cos_half_turn((ph - f) * pi_over_expiration_));
  }
  // Fall of the pleural pressure below end-expiration at t (mmHg): depth x swing.
  double pleural_fall_mmhg(double t_s, std::size_t& breath_hint) const {
    return depth_mmhg_ == 0.0 ? 0.0 : depth_mmhg_ * swing(phase(t_s, breath_hint));
  }

  const std::vector<double>& breath_starts_s() const { return starts_; }
  double nominal_period_s() const { return period_s_; }
  double inspiration_fraction() const { return inspiration_fraction_; }
  double end_expiratory_mmhg() const { return end_expiratory_mmhg_; }
  double depth_mmhg() const { return depth_mmhg_; }

 private:
  // Breath k holds t: starts_[k] <= t < starts_[k + 1]. Inside it the quotient is in [0, 1]
  // already (floor would return 0 unless it is 1). Reciprocals, as the right-hand side's
  // dependency chains start here and divisions are slow.
  double phase_in_breath(double t_s, std::size_t k) const {
    const double ph = (t_s - starts_[k]) * inverse_lengths_[k];
    return ph < 1.0 ? ph : 0.0;
  }
  double phase_searched(double t_s, std::size_t& breath_hint) const;

  std::vector<double> starts_;
  std::vector<double> inverse_lengths_;  // 1 / (starts_[k + 1] - starts_[k])
  double period_s_ = 4.0;
  double inspiration_fraction_ = 0.4;
  double end_expiratory_mmhg_ = -4.0;
  double depth_mmhg_ = 0.0;
  double pi_over_inspiration_ = M_PI / 0.4, pi_over_expiration_ = M_PI / 0.6;
};

}  // namespace stethogen::gen
