#include "generator/transmission/sensor.hpp"

#include <algorithm>
#include <cmath>
#include "generator/transmission/portable_extra.hpp"

namespace stethogen::gen {
namespace {

enum class Kind { lowpass1, highpass1, lowpass2, highpass2, peak };

struct SectionSpec {
  Kind kind;
  double corner_hz;
  double q = 0.7071;
  double gain_db = 0;
};

// Shapes (docs/sounds.md, "Sensors"). The bell's skin-sealed cup resonates and boosts roughly
// 40-110 Hz; the diaphragm's stiff membrane attenuates that band and passes higher frequencies
// (Abella, Formolo & Penney 1992, J Acoust Soc Am 91:2224, from memory). The electronic
// microphone is flat between its coupling high-pass and its anti-alias low-pass. The
// accelerometer senses surface acceleration, i.e. the velocity the other sensors see
// differentiated: +6 dB/octave below 300 Hz, with a mounted resonance near 1.5 kHz.
std::vector<SectionSpec> sensor_sections(Sensor sensor) {
  switch (sensor) {
    case Sensor::acoustic_bell:
      return {{Kind::highpass1, 20.0}, {Kind::peak, 66.0, 0.94, 8.0}, {Kind::lowpass2, 250.0}};
    case Sensor::acoustic_diaphragm:
      return {{Kind::highpass1, 20.0}, {Kind::highpass1, 100.0}, {Kind::lowpass2, 800.0}};
    case Sensor::electronic:
      return {{Kind::highpass1, 20.0}, {Kind::lowpass2, 2000.0}};
    case Sensor::accelerometer:
      return {{Kind::highpass2, 10.0}, {Kind::highpass1, 300.0}, {Kind::peak, 1500.0, 2.0, 6.0}};
  }
  return {};
}

Biquad design(const SectionSpec& s, double fs_hz) {
  switch (s.kind) {
    case Kind::lowpass1: return butter_lowpass1(s.corner_hz, fs_hz);
    case Kind::highpass1: return butter_highpass1(s.corner_hz, fs_hz);
    case Kind::lowpass2: return butter_lowpass2(s.corner_hz, fs_hz);
    case Kind::highpass2: return butter_highpass2(s.corner_hz, fs_hz);
    case Kind::peak: return peaking(s.corner_hz, s.q, s.gain_db, fs_hz);
  }
  return {};
}

}  // namespace

FilterCascade sensor_response(Sensor sensor, double fs_hz) {
  FilterCascade c;
  for (const SectionSpec& s : sensor_sections(sensor))
    if (s.corner_hz <= max_corner_hz(fs_hz)) c.sections.push_back(design(s, fs_hz));
  c.gain = 1.0 / std::abs(c.response(kSensorReferenceHz, fs_hz));
  return c;
}

double quantisation_step(SampleFormat format) {
  switch (format) {
    case SampleFormat::int16: return std::ldexp(1.0, -15);
    case SampleFormat::int24: return std::ldexp(1.0, -23);
    case SampleFormat::float32: return 0.0;
  }
  return 0.0;
}

namespace {

// Appends the runs of samples of x (times gain) beyond [-1, upper] as clipping artifacts.
void find_clipping(const float* x, std::size_t n, double gain, double upper, std::int32_t site, int rate_hz,
                   std::vector<Artifact>& clipped) {
  std::size_t run_start = 0;
  double run_peak = 0;
  bool in_run = false;
  for (std::size_t i = 0; i <= n; ++i) {
    double v = i < n ? x[i] * gain : 0.0;
    bool over = v > upper || v < -1.0;
    if (over && !in_run) { in_run = true; run_start = i; run_peak = 0; }
    if (over) run_peak = std::max(run_peak, std::abs(v));
    if (!over && in_run) {
      in_run = false;
      clipped.push_back({"clipping", site, static_cast<double>(run_start) / rate_hz, static_cast<double>(i) / rate_hz,
                         20.0 * portable_extra::log10(run_peak)});
    }
  }
}

}  // namespace

std::vector<Artifact> apply_output_stage(SiteArray<float>& signal, double gain_db, SampleFormat format,
                                         int sample_rate_hz) {
  const double gain = portable::pow(10.0, gain_db / 20.0);
  const double step = quantisation_step(format);
  // Integer formats cannot hold +1.0 exactly: the largest code is 1 - step (e.g. 32767/32768).
  const double upper = step > 0 ? 1.0 - step : 1.0;
  std::vector<Artifact> clipped;
  for (std::size_t s = 0; s < signal.n_sites; ++s) {
    float* x = signal.row(s);
    const std::size_t n = signal.n_samples;
    // Branch-free passes the compiler vectorises; the run search only where something clips.
    float lowest = 0, highest = 0;
    for (std::size_t i = 0; i < n; ++i) {
      lowest = std::min(lowest, x[i]);
      highest = std::max(highest, x[i]);
    }
    const bool clips = lowest * gain < -1.0 || highest * gain > upper;
    if (clips) find_clipping(x, n, gain, upper, static_cast<std::int32_t>(s), sample_rate_hz, clipped);
    // Unit gain (0 dB, the default), float32 and nothing beyond full scale: the pass below would
    // give every sample back unchanged (x * 1.0 and the float -> double -> float round trip are
    // exact, the clamp is idle), so it is skipped.
    if (step == 0 && gain == 1.0 && !clips) continue;
    if (step > 0) {
      for (std::size_t i = 0; i < n; ++i) x[i] = static_cast<float>(std::round(std::clamp(x[i] * gain, -1.0, upper) / step) * step);
    } else {
      for (std::size_t i = 0; i < n; ++i) x[i] = static_cast<float>(std::clamp(x[i] * gain, -1.0, upper));
    }
  }
  return clipped;
}

}  // namespace stethogen::gen
