#include "scoring/baseline_detector.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>
#include <numeric>

namespace stethogen::scoring {
namespace {

// One second-order Butterworth section by the bilinear transform with pre-warping
// (Oppenheim & Schafer, Discrete-Time Signal Processing, bilinear transform design).
Biquad section(double f0_hz, double q, double fs_hz, bool high_pass) {
  double k = std::tan(std::numbers::pi * f0_hz / fs_hz);
  double norm = 1 / (1 + k / q + k * k);
  Biquad s;
  s.b0 = high_pass ? norm : k * k * norm;
  s.b1 = high_pass ? -2 * s.b0 : 2 * s.b0;
  s.b2 = s.b0;
  s.a1 = 2 * (k * k - 1) * norm;
  s.a2 = (1 - k / q + k * k) * norm;
  return s;
}

void run_sections(const std::vector<Biquad>& sections, std::vector<double>& x) {
  for (const Biquad& s : sections) {
    double z1 = 0, z2 = 0;
    for (double& v : x) {
      double y = s.b0 * v + z1;
      z1 = s.b1 * v - s.a1 * y + z2;
      z2 = s.b2 * v - s.a2 * y;
      v = y;
    }
  }
}

}  // namespace

std::vector<Biquad> butterworth_band(double low_hz, double high_hz, double sample_rate_hz) {
  // The poles of a 4th-order Butterworth low-pass pair up into sections with
  // Q = 1 / (2 cos(pi/8)) and 1 / (2 cos(3 pi/8)) (Butterworth 1930).
  const double q1 = 1 / (2 * std::cos(std::numbers::pi / 8)), q2 = 1 / (2 * std::cos(3 * std::numbers::pi / 8));
  return {section(low_hz, q1, sample_rate_hz, true), section(low_hz, q2, sample_rate_hz, true),
          section(high_hz, q1, sample_rate_hz, false), section(high_hz, q2, sample_rate_hz, false)};
}

std::vector<double> filtfilt(const std::vector<Biquad>& sections, std::vector<double> x) {
  if (x.size() < 2) return x;
  // Odd reflection at both ends so the start-up transient falls outside the signal.
  std::size_t pad = std::min<std::size_t>(x.size() - 1, 2000);
  std::vector<double> padded;
  padded.reserve(x.size() + 2 * pad);
  for (std::size_t i = pad; i > 0; --i) padded.push_back(2 * x.front() - x[i]);
  padded.insert(padded.end(), x.begin(), x.end());
  for (std::size_t i = 1; i <= pad; ++i) padded.push_back(2 * x.back() - x[x.size() - 1 - i]);
  run_sections(sections, padded);
  std::reverse(padded.begin(), padded.end());
  run_sections(sections, padded);
  std::reverse(padded.begin(), padded.end());
  return {padded.begin() + static_cast<std::ptrdiff_t>(pad), padded.end() - static_cast<std::ptrdiff_t>(pad)};
}

std::vector<double> shannon_envelope(const std::vector<double>& x, double sample_rate_hz, double frame_s,
                                     double hop_s) {
  double peak = 0;
  for (double v : x) peak = std::max(peak, std::abs(v));
  auto frame = static_cast<std::size_t>(std::lround(frame_s * sample_rate_hz));
  auto hop = static_cast<std::size_t>(std::lround(hop_s * sample_rate_hz));
  std::vector<double> env;
  if (peak == 0 || frame == 0 || hop == 0 || x.size() < frame) return env;
  // Average Shannon energy -x^2 log x^2 of the peak-normalised signal (Liang et al. 1997): it
  // lifts medium intensities over both faint noise and loud spikes.
  std::vector<double> energy(x.size());
  for (std::size_t i = 0; i < x.size(); ++i) {
    double s = (x[i] / peak) * (x[i] / peak);
    energy[i] = s > 0 ? -s * std::log(s) : 0.0;
  }
  std::vector<double> cumulative(x.size() + 1, 0.0);
  std::partial_sum(energy.begin(), energy.end(), cumulative.begin() + 1);
  for (std::size_t start = 0; start + frame <= x.size(); start += hop)
    env.push_back((cumulative[start + frame] - cumulative[start]) / static_cast<double>(frame));
  double mean = std::accumulate(env.begin(), env.end(), 0.0) / static_cast<double>(env.size());
  double ss = 0;
  for (double e : env) ss += (e - mean) * (e - mean);
  double sd = std::sqrt(ss / static_cast<double>(env.size()));
  for (double& e : env) e = sd > 0 ? (e - mean) / sd : 0.0;
  return env;
}

namespace {

// Local maxima above the threshold, at least min_spacing frames apart (taller ones win), with
// sub-frame positions by parabolic interpolation. Returned in frame units, ascending.
std::vector<double> pick_peaks(const std::vector<double>& env, double threshold, std::size_t min_spacing) {
  std::vector<std::size_t> candidates;
  for (std::size_t k = 1; k + 1 < env.size(); ++k)
    if (env[k] > threshold && env[k] >= env[k - 1] && env[k] > env[k + 1]) candidates.push_back(k);
  std::sort(candidates.begin(), candidates.end(), [&](auto a, auto b) { return env[a] > env[b]; });
  std::vector<std::size_t> kept;
  for (std::size_t c : candidates) {
    bool clear = std::none_of(kept.begin(), kept.end(), [&](std::size_t k) {
      return (c > k ? c - k : k - c) < min_spacing;
    });
    if (clear) kept.push_back(c);
  }
  std::sort(kept.begin(), kept.end());
  std::vector<double> peaks;
  for (std::size_t k : kept) {
    double a = env[k - 1], b = env[k], c = env[k + 1];
    double denom = a - 2 * b + c;
    peaks.push_back(static_cast<double>(k) + (denom < 0 ? 0.5 * (a - c) / denom : 0.0));
  }
  return peaks;
}

// Heart period in frames: over 0.3-2.0 s (200-30 bpm), the shortest lag whose autocorrelation
// comes within 85 % of the maximum, so that a multiple of the period does not win.
double heart_period(const std::vector<double>& env, double hop_s) {
  auto lo = static_cast<std::size_t>(0.3 / hop_s), hi = static_cast<std::size_t>(2.0 / hop_s);
  hi = std::min(hi, env.size() / 2);
  if (hi <= lo) return 0;
  std::vector<double> r(hi + 1, 0.0);
  for (std::size_t lag = lo; lag <= hi; ++lag) {
    for (std::size_t k = 0; k + lag < env.size(); ++k) r[lag] += env[k] * env[k + lag];
    r[lag] /= static_cast<double>(env.size() - lag);
  }
  double best = *std::max_element(r.begin() + static_cast<std::ptrdiff_t>(lo), r.end());
  for (std::size_t lag = lo; lag <= hi; ++lag) {
    bool local_max = (lag == lo || r[lag] >= r[lag - 1]) && (lag == hi || r[lag] >= r[lag + 1]);
    if (local_max && r[lag] >= 0.85 * best) return static_cast<double>(lag);
  }
  return 0;
}

}  // namespace

std::vector<DetectedSound> detect_heart_sounds(const float* samples, std::size_t n, int sample_rate_hz,
                                               const BaselineOptions& o) {
  const double fs = sample_rate_hz;
  std::vector<double> x(samples, samples + n);
  x = filtfilt(butterworth_band(o.low_hz, std::min(o.high_hz, 0.45 * fs), fs), std::move(x));
  std::vector<double> env = shannon_envelope(x, fs, o.frame_s, o.hop_s);
  if (env.size() < 3) return {};
  auto spacing = static_cast<std::size_t>(std::lround(o.min_spacing_s / o.hop_s));
  double period = heart_period(env, o.hop_s);
  if (period <= 0) return {};
  // Two sounds a beat are expected: when a faint S2 (or S1) stays under the threshold, lower it
  // step by step until the count reaches 80 % of two per period.
  const double expected_peaks = 2.0 * static_cast<double>(env.size()) / period;
  std::vector<double> peaks;
  for (double threshold = o.threshold; threshold >= o.threshold - 1.0; threshold -= 0.2) {
    peaks = pick_peaks(env, threshold, std::max<std::size_t>(spacing, 1));
    if (static_cast<double>(peaks.size()) >= 0.8 * expected_peaks) break;
  }
  if (peaks.size() < 3) return {};

  // Expected S1-centre to S2-centre time: QS2 (Weissler et al. 1968, men) less the time from
  // Q to the S1 centre and plus half an S2 (about 75 ms together; Schmidt et al. 2010 durations).
  double heart_rate_bpm = 60.0 / (period * o.hop_s);
  double expected_systole = std::clamp(0.546 - 0.0021 * heart_rate_bpm - 0.075, 0.12, 0.50) / o.hop_s;

  // Two-means clustering of the plausible peak-to-peak intervals.
  std::vector<double> intervals, plausible;
  for (std::size_t k = 0; k + 1 < peaks.size(); ++k) {
    intervals.push_back(peaks[k + 1] - peaks[k]);
    if (intervals.back() >= 0.1 * period && intervals.back() <= 0.9 * period) plausible.push_back(intervals.back());
  }
  if (plausible.size() < 2) return {};
  std::sort(plausible.begin(), plausible.end());
  double c_short = plausible[plausible.size() / 4], c_long = plausible[3 * plausible.size() / 4];
  for (int iteration = 0; iteration < 20; ++iteration) {
    double s_sum = 0, l_sum = 0;
    int s_n = 0, l_n = 0;
    for (double d : intervals) {
      if (d < 0.1 * period || d > 0.9 * period) continue;
      if (std::abs(d - c_short) <= std::abs(d - c_long)) s_sum += d, ++s_n;
      else l_sum += d, ++l_n;
    }
    if (s_n == 0 || l_n == 0) break;
    c_short = s_sum / s_n;
    c_long = l_sum / l_n;
  }
  // Durations compare by ratio: 0.1 s is further from 0.24 s than 0.43 s is.
  bool short_is_systole =
      std::abs(std::log(c_short / expected_systole)) <= std::abs(std::log(c_long / expected_systole));
  double systole = short_is_systole ? c_short : c_long, diastole = short_is_systole ? c_long : c_short;

  // +1: systolic interval, -1: diastolic, 0: neither (a missed or an extra peak).
  auto classify = [&](double d) {
    double ds = std::abs(d - systole), dd = std::abs(d - diastole);
    if (ds <= dd && ds <= 0.3 * systole + 2) return 1;
    if (dd < ds && dd <= 0.3 * diastole + 2) return -1;
    return 0;
  };
  std::vector<DetectedSound> out;
  for (std::size_t k = 0; k < peaks.size(); ++k) {
    int before = k > 0 ? classify(intervals[k - 1]) : 0;
    int after = k + 1 < peaks.size() ? classify(intervals[k]) : 0;
    // Votes for S1: starts a systole or ends a diastole; for S2 the reverse.
    int s1_votes = (after == 1) + (before == -1), s2_votes = (after == -1) + (before == 1);
    if (s1_votes == s2_votes) continue;
    double time_s = (peaks[k] * o.hop_s) + 0.5 * o.frame_s;  // frame centre
    out.push_back({s1_votes > s2_votes ? EventKind::S1 : EventKind::S2, std::min(time_s, n / fs)});
  }
  return out;
}

}  // namespace stethogen::scoring
