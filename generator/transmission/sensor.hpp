// Sensor responses (acoustic bell, acoustic diaphragm, electronic microphone, accelerometer) and
// the output stage every sensor shares: gain, clipping at full scale 1.0 and quantisation.
#pragma once

#include <vector>

#include "core/record.hpp"
#include "core/types.hpp"
#include "generator/transmission/biquad.hpp"

namespace stethogen::gen {

// The sensor's frequency response at the given rate, normalised to 0 dB at kSensorReferenceHz so
// that sensors differ in shape, not in overall level. Sections whose corner lies above
// 0.45 fs act outside the synthesised band and are left out.
FilterCascade sensor_response(Sensor sensor, double fs_hz);
inline constexpr double kSensorReferenceHz = 150.0;

// Quantisation step in full-scale units: 2^-(bits-1) for the integer formats, 0 for float32.
double quantisation_step(SampleFormat format);

// Applies gain (dB), clips to [-1, 1] and quantises, in place. Returns the clipped runs of each
// site as artifacts ("clipping", level = peak before clipping in dB re full scale).
std::vector<Artifact> apply_output_stage(SiteArray<float>& signal, double gain_db, SampleFormat format,
                                         int sample_rate_hz);

}  // namespace stethogen::gen
