// The explicit Runge-Kutta pair of Dormand & Prince (1980, J Comput Appl Math 6:19): fifth-order
// steps with a fourth-order error estimate, first stage same as last (FSAL: six new right-hand
// side evaluations per attempt), and its continuous extension of order four (Hairer, Norsett &
// Wanner 1993, Solving Ordinary Differential Equations I, 2nd ed., section II.6, in the form of
// their code DOPRI5: five coefficient vectors per step, so that a dense sample costs four
// multiply-adds per component). Fixed-size state; nothing allocated.
//
// Error per component: |err_i| / (abs_tol + rel_tol (|x_i| + h |dx_i/dt|)) at the start of the
// step, maximum over the components (the norm odeint's default checker uses, kept so the steps
// stay where they were). Step size: the proportional-integral controller of DOPRI5 (Hairer,
// Norsett & Wanner 1993, section II.4; Gustafsson 1991, ACM Trans Math Softw 17:533).
//
// The stage sums and the dense output are element-wise over the state, so on x86-64 they are
// compiled twice, for SSE2 and for AVX (four lanes instead of two), and the AVX copy runs where
// the CPU has it. Both do the same IEEE operations in the same order per component (no FMA, no
// reassociation), so the results are bit-identical (tested).
#pragma once

#include <algorithm>
#include <array>
#include <cmath>

#include "core/portable_math.hpp"
#include <cstddef>

namespace stethogen::gen {

struct Dopri5Control {
  double abs_tolerance = 1e-5;
  double rel_tolerance = 1e-5;
  double max_step_s = 0;  // 0: unbounded
  int max_rejections = 500;  // rejected attempts in a row before a step counts as failed
  bool allow_avx = true;     // false: the SSE2 code everywhere (for the test of both)
};

#if defined(__x86_64__)
#define STETHOGEN_DOPRI5_AVX_TARGET __attribute__((target("avx")))
inline bool dopri5_avx_available() {
  static const bool available = __builtin_cpu_supports("avx");
  return available;
}
#else
#define STETHOGEN_DOPRI5_AVX_TARGET
inline bool dopri5_avx_available() { return false; }
#endif

// System: void operator()(const std::array<double, N>& x, std::array<double, N>& dxdt, double t).
template <class System, std::size_t N>
class Dopri5 {
 public:
  using State = std::array<double, N>;

  Dopri5(System system, const State& x0, double t0_s, double first_step_s, const Dopri5Control& control)
      : system_(system), control_(control), dt_(first_step_s), avx_(control.allow_avx && dopri5_avx_available()) {
    restart(x0, t0_s);
  }

  // Continues from x at t_s with the current step size; the controller keeps its history, and
  // state_at() the last step's extension until the next step.
  void restart(const State& x, double t_s) {
    if (h_last_ > 0) prepare_dense();
    x_ = x;
    t_ = t_s;
    derivative_ready_ = false;
  }

  // One accepted step from time_s(), retrying with smaller steps after rejections. False if
  // max_rejections attempts in a row were rejected (nothing changes then but the step size).
  bool step() {
    if (!derivative_ready_) {
      system_(x_, k1_, t_);
      derivative_ready_ = true;
    }
    for (int rejected = 0; rejected < control_.max_rejections; ++rejected) {
      if (control_.max_step_s > 0 && dt_ > control_.max_step_s) dt_ = control_.max_step_s;
      const double h = dt_;
      const double error = avx_ ? attempt_avx(h) : attempt_plain(h);
      // Not "error <= 1": a NaN error is accepted, and the caller sees the non-finite state.
      if (error > 1.0) {
        decrease(error);
        continue;
      }
      x_old_ = x_;
      k_old_ = k1_;
      x_ = x_new_;
      k1_ = k7_;
      t_old_ = t_;
      t_ += h;
      h_last_ = h;
      dense_ready_ = false;
      increase(error);
      return true;
    }
    return false;
  }

  double time_s() const { return t_; }
  double previous_time_s() const { return t_old_; }
  double step_size_s() const { return dt_; }  // the next attempt's
  const State& state() const { return x_; }

  // The continuous extension of the last step, for t_s in [previous_time_s(), time_s()].
  void state_at(double t_s, State& x) const {
    prepare_dense();
    if (avx_) evaluate_avx(t_s, x); else evaluate_plain(t_s, x);
  }
  double component_at(double t_s, std::size_t i) const {
    prepare_dense();
    const double s = (t_s - t_old_) * inverse_h_, s1 = 1.0 - s;
    return dense_[0][i] + s * (dense_[1][i] + s1 * (dense_[2][i] + s * (dense_[3][i] + s1 * dense_[4][i])));
  }

 private:
  // Butcher tableau (Dormand & Prince 1980, table 2: RK5(4)7M).
  static constexpr double a2 = 1.0 / 5, a3 = 3.0 / 10, a4 = 4.0 / 5, a5 = 8.0 / 9;
  static constexpr double b21 = 1.0 / 5;
  static constexpr double b31 = 3.0 / 40, b32 = 9.0 / 40;
  static constexpr double b41 = 44.0 / 45, b42 = -56.0 / 15, b43 = 32.0 / 9;
  static constexpr double b51 = 19372.0 / 6561, b52 = -25360.0 / 2187, b53 = 64448.0 / 6561, b54 = -212.0 / 729;
  static constexpr double b61 = 9017.0 / 3168, b62 = -355.0 / 33, b63 = 46732.0 / 5247, b64 = 49.0 / 176,
                          b65 = -5103.0 / 18656;
  static constexpr double c1 = 35.0 / 384, c3 = 500.0 / 1113, c4 = 125.0 / 192, c5 = -2187.0 / 6784, c6 = 11.0 / 84;
  // Fifth- minus fourth-order weights.
  static constexpr double e1 = c1 - 5179.0 / 57600, e3 = c3 - 7571.0 / 16695, e4 = c4 - 393.0 / 640,
                          e5 = c5 - -92097.0 / 339200, e6 = c6 - 187.0 / 2100, e7 = -1.0 / 40;
  // Dense output (Hairer, Norsett & Wanner 1993, II.6; their DOPRI5's d1..d7).
  static constexpr double d1 = -12715105075.0 / 11282082432, d3 = 87487479700.0 / 32700410799,
                          d4 = -10690763975.0 / 1880347072, d5 = 701980252875.0 / 199316789632,
                          d6 = -1453857185.0 / 822651844, d7 = 69997945.0 / 29380423;
  // Controller: safety factor, growth and shrink limits, exponents of the current and the
  // previous error (beta = 0.04, alpha = 1/5 - 0.75 beta), and the least previous error counted.
  static constexpr double kSafety = 0.9, kMaxGrowth = 10.0, kMaxShrink = 0.2, kBeta = 0.04,
                          kAlpha = 0.2 - 0.75 * kBeta;
  static constexpr double kLogErrorFloor = -9.210340371976184;  // ln 1e-4

  STETHOGEN_DOPRI5_AVX_TARGET double attempt_avx(double h) { return attempt(h); }
  double attempt_plain(double h) { return attempt(h); }
  STETHOGEN_DOPRI5_AVX_TARGET void evaluate_avx(double t_s, State& x) const { evaluate(t_s, x); }
  void evaluate_plain(double t_s, State& x) const { evaluate(t_s, x); }
  STETHOGEN_DOPRI5_AVX_TARGET void fill_dense_avx() const { fill_dense(); }
  void fill_dense_plain() const { fill_dense(); }

  // Stages 2..7 from x_ and k1_ over h; x_new_, k2_..k7_ and the scaled error norm.
  [[gnu::always_inline]] double attempt(double h) {
    const double t = t_;
    for (std::size_t i = 0; i < N; ++i) stage_[i] = x_[i] + h * b21 * k1_[i];
    system_(stage_, k2_, t + h * a2);
    for (std::size_t i = 0; i < N; ++i) stage_[i] = x_[i] + h * b31 * k1_[i] + h * b32 * k2_[i];
    system_(stage_, k3_, t + h * a3);
    for (std::size_t i = 0; i < N; ++i) stage_[i] = x_[i] + h * b41 * k1_[i] + h * b42 * k2_[i] + h * b43 * k3_[i];
    system_(stage_, k4_, t + h * a4);
    for (std::size_t i = 0; i < N; ++i)
      stage_[i] = x_[i] + h * b51 * k1_[i] + h * b52 * k2_[i] + h * b53 * k3_[i] + h * b54 * k4_[i];
    system_(stage_, k5_, t + h * a5);
    for (std::size_t i = 0; i < N; ++i)
      stage_[i] = x_[i] + h * b61 * k1_[i] + h * b62 * k2_[i] + h * b63 * k3_[i] + h * b64 * k4_[i] + h * b65 * k5_[i];
    system_(stage_, k6_, t + h);
    for (std::size_t i = 0; i < N; ++i)
      x_new_[i] = x_[i] + h * c1 * k1_[i] + h * c3 * k3_[i] + h * c4 * k4_[i] + h * c5 * k5_[i] + h * c6 * k6_[i];
    system_(x_new_, k7_, t + h);
    // The scaled errors first, then their maximum: the compiler vectorises the first loop only
    // apart from the reduction (a maximum is order-dependent where a NaN may occur).
    const double abs_h = std::fabs(h);
    for (std::size_t i = 0; i < N; ++i) {
      const double estimate =
          h * e1 * k1_[i] + h * e3 * k3_[i] + h * e4 * k4_[i] + h * e5 * k5_[i] + h * e6 * k6_[i] + h * e7 * k7_[i];
      stage_[i] = std::fabs(estimate) /
                  (control_.abs_tolerance + control_.rel_tolerance * (std::fabs(x_[i]) + abs_h * std::fabs(k1_[i])));
    }
    double error = 0;
    for (std::size_t i = 0; i < N; ++i) error = std::max(error, stage_[i]);  // skips a NaN, as odeint's norm did
    return error;
  }

  void decrease(double error) {
    rejected_ = true;
    dt_ *= std::max(kSafety / portable::pow(error, kAlpha), kMaxShrink);
    limit_step();
  }
  // kSafety previous^beta / error^alpha, from one logarithm per step (the previous one is kept);
  // no growth right after a rejection.
  void increase(double error) {
    const double log_error = portable::log(error);
    double factor = kSafety * portable::exp(kBeta * previous_log_error_ - kAlpha * log_error);
    factor = std::clamp(factor, kMaxShrink, kMaxGrowth);
    if (rejected_) factor = std::min(factor, 1.0);
    rejected_ = false;
    previous_log_error_ = error > 1e-4 ? log_error : kLogErrorFloor;
    dt_ *= factor;
    limit_step();
  }
  void limit_step() {
    if (control_.max_step_s > 0) dt_ = std::min(dt_, control_.max_step_s);
  }

  // y(t_old + s h) = r0 + s (r1 + (1 - s) (r2 + s (r3 + (1 - s) r4))).
  [[gnu::always_inline]] void evaluate(double t_s, State& x) const {
    const double s = (t_s - t_old_) * inverse_h_, s1 = 1.0 - s;
    for (std::size_t i = 0; i < N; ++i)
      x[i] = dense_[0][i] + s * (dense_[1][i] + s1 * (dense_[2][i] + s * (dense_[3][i] + s1 * dense_[4][i])));
  }
  void prepare_dense() const {
    if (dense_ready_) return;
    if (avx_) fill_dense_avx(); else fill_dense_plain();
    inverse_h_ = 1.0 / h_last_;
    dense_ready_ = true;
  }
  [[gnu::always_inline]] void fill_dense() const {
    const double h = h_last_;
    for (std::size_t i = 0; i < N; ++i) {
      const double difference = x_[i] - x_old_[i];
      const double start_slope = h * k_old_[i] - difference;
      dense_[0][i] = x_old_[i];
      dense_[1][i] = difference;
      dense_[2][i] = start_slope;
      dense_[3][i] = difference - h * k1_[i] - start_slope;
      dense_[4][i] = h * (d1 * k_old_[i] + d3 * k3_[i] + d4 * k4_[i] + d5 * k5_[i] + d6 * k6_[i] + d7 * k1_[i]);
    }
  }

  System system_;
  Dopri5Control control_;
  double t_ = 0, t_old_ = 0, dt_, h_last_ = 0;
  State x_{}, k1_{};                      // state and derivative at t_
  State x_old_{}, k_old_{};               // at t_old_
  State stage_{}, x_new_{}, k2_{}, k3_{}, k4_{}, k5_{}, k6_{}, k7_{};
  mutable std::array<State, 5> dense_{};
  mutable double inverse_h_ = 0;
  mutable bool dense_ready_ = false;
  bool derivative_ready_ = false;
  double previous_log_error_ = kLogErrorFloor;  // ln of the previous accepted step's error
  bool rejected_ = false;
  bool avx_;
};

}  // namespace stethogen::gen
