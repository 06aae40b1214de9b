// The bundled baseline S1/S2 detector (docs/scoring.md), so users have a reference score:
//  1. zero-phase Butterworth band-pass 25-400 Hz (4th-order high-pass and low-pass sections by
//     the bilinear transform, run forwards and backwards);
//  2. normalised average Shannon energy envelope over 20 ms frames every 10 ms (Liang,
//     Lukkarinen & Hartimo 1997, "Heart sound segmentation algorithm based on heart sound
//     envelogram", Computers in Cardiology 24:105);
//  3. peak picking on the envelope with a minimum spacing, the threshold lowered until about
//     two sounds per heart period pass;
//  4. heart period from the envelope's autocorrelation, and S1/S2 labels from interval logic:
//     peak-to-peak intervals fall into a systolic and a diastolic cluster; the cluster nearer (by ratio) the
//     systolic duration expected at that heart rate (Weissler, Harris & Schoenfeld 1968,
//     Circulation 37:149: QS2 = 546 - 2.1 HR ms) is systole, which is the shorter one at rest
//     (Liang et al. 1997). A peak that starts a systolic or ends a diastolic interval is S1.
#pragma once

#include <cstddef>
#include <vector>

#include "core/types.hpp"

namespace stethogen::scoring {

struct DetectedSound {
  EventKind kind = EventKind::S1;  // S1 or S2
  double time_s = 0;               // estimated centre of the sound
};

struct BaselineOptions {
  double low_hz = 25, high_hz = 400;  // band-pass edges (high clamped below Nyquist)
  double frame_s = 0.020, hop_s = 0.010;
  double min_spacing_s = 0.10;        // peaks closer than this are one sound
  double threshold = 0.3;             // on the z-scored envelope (SD units); lowered by up to 1
                                      // when fewer than 80 % of two peaks per beat pass
};

// One biquad section, transposed direct form II (b0 b1 b2 / 1 a1 a2).
struct Biquad {
  double b0 = 1, b1 = 0, b2 = 0, a1 = 0, a2 = 0;
};

// 4th-order Butterworth high-pass at low_hz then low-pass at high_hz, as four sections.
std::vector<Biquad> butterworth_band(double low_hz, double high_hz, double sample_rate_hz);
// Forward-backward filtering (zero phase, squared magnitude).
std::vector<double> filtfilt(const std::vector<Biquad>& sections, std::vector<double> x);
// The normalised average Shannon energy envelope (z-scored), one value per hop.
std::vector<double> shannon_envelope(const std::vector<double>& x, double sample_rate_hz, double frame_s,
                                     double hop_s);

// S1 and S2 of one channel, in time order.
std::vector<DetectedSound> detect_heart_sounds(const float* samples, std::size_t n, int sample_rate_hz,
                                               const BaselineOptions& options = {});

}  // namespace stethogen::scoring
