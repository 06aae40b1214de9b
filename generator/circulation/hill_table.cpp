#include "generator/circulation/hill_table.hpp"

#include <algorithm>
#include <cmath>

#include "core/portable_math.hpp"

namespace stethogen::gen {

namespace {

double exact_shape(double s, double log_ratio_term, double m1, double m2, double norm) {
  const double g1 = portable::exp(m1 * portable::log(s) + log_ratio_term), g2 = portable::pow(s, m2);
  return norm * g1 / ((1.0 + g1) * (1.0 + g2));
}

}  // namespace

HillTable::HillTable(double log_ratio_term, double m1, double m2, double norm) {
  // The steep fall around s = 1 (width about 1/m2) sets the piece width: 1/64 holds the
  // interpolation error near 1e-15 up to m2 = 20 (degree 8), finer pieces for steeper shapes.
  double n = 64;
  while (n * 20.0 < 64.0 * m2) n *= 2.0;
  pieces_per_unit_ = n;
  first_piece_ = static_cast<int>(kFirstS * n);
  last_piece_ = static_cast<int>(kLastS * n);
  constexpr int kNodes = kDegree + 1;
  std::array<double, kNodes> node_x{}, value{};
  pieces_.resize(static_cast<std::size_t>(last_piece_ - first_piece_));
  for (int i = first_piece_; i < last_piece_; ++i) {
    const auto s_at = [&](double x) { return (i + 0.5 * (x + 1.0)) / n; };
    // Interpolation at the Chebyshev nodes of the first kind (Trefethen 2013, Approximation
    // Theory and Approximation Practice, ch. 3): Chebyshev coefficients by the discrete cosine
    // sum, then the monomial coefficients from T_{j+1} = 2 x T_j - T_{j-1}.
    for (int k = 0; k < kNodes; ++k) {
      node_x[k] = portable::cos(M_PI * (k + 0.5) / kNodes);
      value[k] = exact_shape(s_at(node_x[k]), log_ratio_term, m1, m2, norm);
    }
    std::array<double, kNodes> mono{}, t_prev{}, t_now{}, t_next{};
    t_prev[0] = 1.0;  // T_0
    t_now[1] = 1.0;   // T_1
    for (int j = 0; j < kNodes; ++j) {
      double a = 0;
      for (int k = 0; k < kNodes; ++k) a += value[k] * portable::cos(M_PI * j * (k + 0.5) / kNodes);
      a *= (j == 0 ? 1.0 : 2.0) / kNodes;
      const std::array<double, kNodes>& t_j = j == 0 ? t_prev : t_now;
      for (int d = 0; d < kNodes; ++d) mono[d] += a * t_j[d];
      if (j >= 1) {
        for (int d = 0; d < kNodes; ++d) t_next[d] = (d > 0 ? 2.0 * t_now[d - 1] : 0.0) - t_prev[d];
        t_prev = t_now;
        t_now = t_next;
      }
    }
    pieces_[static_cast<std::size_t>(i - first_piece_)] = mono;
  }
  // Check between and beyond the nodes, piece ends included.
  for (int i = first_piece_; i < last_piece_; ++i) {
    for (int k = 0; k <= 16; ++k) {
      const double s = std::min((i + k / 16.0) / n, kLastS);
      const double error = std::fabs((*this)(s) - exact_shape(s, log_ratio_term, m1, m2, norm));
      build_error_ = std::max(build_error_, error);
    }
  }
  if (!(build_error_ <= kTolerance)) pieces_.clear();
}

}  // namespace stethogen::gen
