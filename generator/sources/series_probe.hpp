// Reading the circulation's dense series at arbitrary times: values, rates of change and their
// extrema over a window. Linear interpolation between samples; rates by central differences.
#pragma once

#include <vector>

#include "generator/hemodynamics.hpp"

namespace stethogen::gen {

class SeriesProbe {
 public:
  explicit SeriesProbe(const HemodynamicSeries& series) : s_(series) {}

  // Value of a trace at time t (clamped to the series' span).
  double value(const std::vector<double>& trace, double time_s) const;
  // Value of (a - b) at time t.
  double difference(const std::vector<double>& a, const std::vector<double>& b, double time_s) const;

  struct Extremum {
    double value = 0;   // rate (unit/s) or value at the extremum
    double time_s = 0;
  };
  // Largest rate of change of (a - b) over [t0, t1]; pass b = nullptr for a alone.
  Extremum max_rate(const std::vector<double>& a, const std::vector<double>* b, double t0_s, double t1_s) const;
  // Smallest (most negative) rate of change of a over [t0, t1].
  Extremum min_rate(const std::vector<double>& a, double t0_s, double t1_s) const;
  // Largest value of a over [t0, t1].
  Extremum max_value(const std::vector<double>& a, double t0_s, double t1_s) const;

  // First sample time in [t0, t1] where the rate of change of (a - b) reaches threshold; NaN if none.
  double first_rate_at_least(const std::vector<double>& a, const std::vector<double>& b, double t0_s, double t1_s,
                             double threshold) const;
  // First sample time in [t0, t1] where the rate of change of a falls to threshold or below; NaN if none.
  double first_rate_at_most(const std::vector<double>& a, double t0_s, double t1_s, double threshold) const;

  bool covers(double time_s) const;
  double start_s() const { return s_.t0_s; }
  double end_s() const { return s_.time_at(s_.size() - 1); }

 private:
  // Sample index range [first, last] inside [t0, t1] with room for central differences.
  bool window(double t0_s, double t1_s, std::size_t& first, std::size_t& last) const;
  double rate_at(const std::vector<double>& a, const std::vector<double>* b, std::size_t k) const;

  const HemodynamicSeries& s_;
};

}  // namespace stethogen::gen
