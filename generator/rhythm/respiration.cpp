#include "generator/rhythm/respiration.hpp"

#include <algorithm>
#include <cmath>
#include <utility>

namespace stethogen::gen {

Respiration::Respiration(std::vector<double> breath_starts_s, double nominal_period_s,
                         double inspiration_fraction, double end_expiratory_mmhg, double depth_mmhg)
    : starts_(std::move(breath_starts_s)),
      period_s_(nominal_period_s),
      inspiration_fraction_(inspiration_fraction),
      end_expiratory_mmhg_(end_expiratory_mmhg),
      depth_mmhg_(depth_mmhg),
      pi_over_inspiration_(M_PI / inspiration_fraction),
      pi_over_expiration_(M_PI / (1.0 - inspiration_fraction)) {
  for (std::size_t k = 0; k + 1 < starts_.size(); ++k) inverse_lengths_.push_back(1.0 / (starts_[k + 1] - starts_[k]));
}

Respiration Respiration::apnoea(double pleural_mmhg) { return Respiration({0.0}, 4.0, 0.4, pleural_mmhg, 0.0); }

double Respiration::phase(double t_s) const {
  std::size_t hint = 0;
  return phase(t_s, hint);
}

double Respiration::phase_searched(double t_s, std::size_t& hint) const {
  double phase_time;
  double period;
  if (starts_.size() < 2 || t_s < starts_.front()) {
    const double origin = starts_.empty() ? 0.0 : starts_.front();
    period = period_s_;
    phase_time = t_s - origin;
  } else if (t_s >= starts_.back()) {
    period = period_s_;
    phase_time = t_s - starts_.back();
  } else {
    // k: the breath holding t, starts_[k] <= t < starts_[k + 1].
    std::size_t k = hint;
    const auto holds = [&](std::size_t i) { return i + 1 < starts_.size() && starts_[i] <= t_s && t_s < starts_[i + 1]; };
    if (!holds(k)) {
      if (holds(k + 1)) {
        ++k;
      } else {
        k = static_cast<std::size_t>(std::upper_bound(starts_.begin(), starts_.end(), t_s) - starts_.begin()) - 1;
      }
    }
    hint = k;
    return phase_in_breath(t_s, k);
  }
  double ph = phase_time / period;
  ph -= std::floor(ph);
  return ph < 1.0 ? ph : 0.0;
}

}  // namespace stethogen::gen
