// The double-Hill shape of one activation plan as piecewise polynomials in s = u / tau2: every
// ventricular pulse of a plan has the same exponents and tau ratio (a stretch scales tau1 and
// tau2 alike), so one table serves them all and an evaluation needs no logarithm, exponential or
// division. Below s = 1/16 the shape behaves like s^m1 (not a polynomial): the exact formula
// stays there. Built from about 3 000 exact evaluations (2 M instructions; make_activation_plan
// keeps the last one per thread) and checked against the formula at build time.
#pragma once

#include <array>
#include <vector>

namespace stethogen::gen {

class HillTable {
 public:
  static constexpr int kDegree = 8;
  static constexpr double kFirstS = 1.0 / 16, kLastS = 2.0;  // the pulses are cut at s = 2
  // Largest difference from the exact shape accepted at build time; above it the table stays empty.
  static constexpr double kTolerance = 1e-13;

  HillTable() = default;
  // The shape norm * g1 / ((1 + g1)(1 + g2)), g1 = (s tau2/tau1)^m1, g2 = s^m2, as built by
  // hill_pulse; empty if the interpolation misses kTolerance (very steep m2).
  HillTable(double log_ratio_term, double m1, double m2, double norm);

  bool empty() const { return pieces_.empty(); }
  // The shape at s in [kFirstS, kLastS]: degree-8 polynomial of the piece holding s in
  // x = 2 (s N - i) - 1, by Estrin's scheme (plain double arithmetic, no FMA).
  double operator()(double s) const {
    const double sn = s * pieces_per_unit_;
    int i = static_cast<int>(sn);
    if (i >= last_piece_) i = last_piece_ - 1;  // s rounded onto kLastS
    const double x = 2.0 * (sn - i) - 1.0;
    const std::array<double, kDegree + 1>& c = pieces_[static_cast<std::size_t>(i - first_piece_)];
    const double x2 = x * x, x4 = x2 * x2;
    const double p01 = c[0] + c[1] * x, p23 = c[2] + c[3] * x, p45 = c[4] + c[5] * x, p67 = c[6] + c[7] * x;
    return ((p01 + p23 * x2) + (p45 + p67 * x2) * x4) + c[8] * (x4 * x4);
  }
  // The largest difference from the exact shape found at the build-time check points.
  double build_error() const { return build_error_; }

 private:
  double pieces_per_unit_ = 0;  // N: pieces of width 1/N, a power of two (s N exact)
  int first_piece_ = 0, last_piece_ = 0;
  std::vector<std::array<double, kDegree + 1>> pieces_;
  double build_error_ = 0;
};

}  // namespace stethogen::gen
