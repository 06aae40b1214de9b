#include "generator/sources/series_probe.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

namespace stethogen::gen {

bool SeriesProbe::covers(double time_s) const {
  return s_.size() >= 3 && time_s >= start_s() && time_s <= end_s();
}

double SeriesProbe::value(const std::vector<double>& trace, double time_s) const {
  double pos = (time_s - s_.t0_s) * s_.rate_hz;
  double last = static_cast<double>(s_.size() - 1);
  pos = std::clamp(pos, 0.0, last);
  auto k = static_cast<std::size_t>(pos);
  if (k + 1 >= s_.size()) return trace[s_.size() - 1];
  double frac = pos - static_cast<double>(k);
  return trace[k] + frac * (trace[k + 1] - trace[k]);
}

double SeriesProbe::difference(const std::vector<double>& a, const std::vector<double>& b, double time_s) const {
  return value(a, time_s) - value(b, time_s);
}

bool SeriesProbe::window(double t0_s, double t1_s, std::size_t& first, std::size_t& last) const {
  if (s_.size() < 3 || !(t1_s >= t0_s)) return false;
  double lo = std::ceil((t0_s - s_.t0_s) * s_.rate_hz);
  double hi = std::floor((t1_s - s_.t0_s) * s_.rate_hz);
  lo = std::max(lo, 1.0);
  hi = std::min(hi, static_cast<double>(s_.size() - 2));
  if (hi < lo) return false;
  first = static_cast<std::size_t>(lo);
  last = static_cast<std::size_t>(hi);
  return true;
}

double SeriesProbe::rate_at(const std::vector<double>& a, const std::vector<double>* b, std::size_t k) const {
  double d = a[k + 1] - a[k - 1];
  if (b) d -= (*b)[k + 1] - (*b)[k - 1];
  return d * 0.5 * s_.rate_hz;
}

SeriesProbe::Extremum SeriesProbe::max_rate(const std::vector<double>& a, const std::vector<double>* b,
                                            double t0_s, double t1_s) const {
  Extremum best{-std::numeric_limits<double>::infinity(), t0_s};
  std::size_t first = 0, last = 0;
  if (!window(t0_s, t1_s, first, last)) return {0.0, t0_s};
  for (std::size_t k = first; k <= last; ++k) {
    double r = rate_at(a, b, k);
    if (r > best.value) best = {r, s_.time_at(k)};
  }
  return best;
}

SeriesProbe::Extremum SeriesProbe::min_rate(const std::vector<double>& a, double t0_s, double t1_s) const {
  Extremum best{std::numeric_limits<double>::infinity(), t0_s};
  std::size_t first = 0, last = 0;
  if (!window(t0_s, t1_s, first, last)) return {0.0, t0_s};
  for (std::size_t k = first; k <= last; ++k) {
    double r = rate_at(a, nullptr, k);
    if (r < best.value) best = {r, s_.time_at(k)};
  }
  return best;
}

double SeriesProbe::first_rate_at_least(const std::vector<double>& a, const std::vector<double>& b, double t0_s,
                                        double t1_s, double threshold) const {
  std::size_t first = 0, last = 0;
  if (!window(t0_s, t1_s, first, last)) return NAN;
  for (std::size_t k = first; k <= last; ++k)
    if (rate_at(a, &b, k) >= threshold) return s_.time_at(k);
  return NAN;
}

double SeriesProbe::first_rate_at_most(const std::vector<double>& a, double t0_s, double t1_s,
                                       double threshold) const {
  std::size_t first = 0, last = 0;
  if (!window(t0_s, t1_s, first, last)) return NAN;
  for (std::size_t k = first; k <= last; ++k)
    if (rate_at(a, nullptr, k) <= threshold) return s_.time_at(k);
  return NAN;
}

SeriesProbe::Extremum SeriesProbe::max_value(const std::vector<double>& a, double t0_s, double t1_s) const {
  Extremum best{-std::numeric_limits<double>::infinity(), t0_s};
  std::size_t first = 0, last = 0;
  if (!window(t0_s, t1_s, first, last)) return {0.0, t0_s};
  for (std::size_t k = first; k <= last; ++k)
    if (a[k] > best.value) best = {a[k], s_.time_at(k)};
  return best;
}

}  // namespace stethogen::gen
