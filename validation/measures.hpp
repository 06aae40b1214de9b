// Quantities measured on validation runs: per-beat means, interval times from the truth tables,
// component amplitudes at a site, spectra. Everything is measured on what the generator wrote
// (record, events, beats, traces) or on its circulation result, never read from a parameter.
#pragma once

#include <functional>
#include <optional>
#include <vector>

#include "core/record.hpp"
#include "generator/hemodynamics.hpp"
#include "generator/sources/component.hpp"
#include "validation/cohort.hpp"

namespace stethogen::validation {

using BeatFilter = std::function<bool(const gen::BeatHemodynamics&)>;

// Mean of a circulation beat quantity over the beats whose LV activation lies in the record,
// skipping NaN; NaN when no beat qualifies.
double beat_mean(const gen::CirculationResult& c, const std::function<double(const gen::BeatHemodynamics&)>& f,
                 const BeatFilter& keep = nullptr);
// Mean of f over the record's /beats rows (optionally filtered), skipping NaN (a missing event).
double row_mean(const Record& r, const std::function<double(const BeatRow&)>& f,
                const std::function<bool(const BeatRow&)>& keep = nullptr);

// Heart-level (site -1) event of a kind in a beat, if present.
std::optional<Event> heart_event(const Record& r, std::int32_t beat, EventKind kind);
// Event of a kind in a beat at one site index, if present.
std::optional<Event> site_event(const Record& r, std::int32_t beat, EventKind kind, std::int32_t site);

// Record beat number of a circulation beat: the truth numbers the first beat whose LV activation
// lies in the record 0 (generator/truth/record_truth.hpp).
std::int32_t record_beat(const gen::CirculationResult& c, std::int32_t circulation_beat);

// Index of a site in the record, or -1.
std::int32_t site_index(const Record& r, Site site);

// Peak |clean signal| within +-half_window_s of t at one site.
double peak_abs(const Record& r, std::int32_t site, double time_s, double half_window_s);

// The record's heart-level sound components, recomputed from its circulation with the record's
// source variation (the same deterministic law the generator used).
std::vector<gen::SoundComponent> components_of(const Run& run);

// Frequency (Hz) of the largest power-spectrum bin of a component's waveform (rendered at
// 4 kHz, zero-padded to a 0.25 Hz grid, FFTW).
double dominant_frequency_hz(const gen::SoundComponent& c);

// Share of the energy of x (sampled at rate_hz) between lo and hi Hz (FFTW periodogram).
double band_energy_fraction(const float* x, std::size_t n, double rate_hz, double lo_hz, double hi_hz);

// Pearson correlation coefficient; NaN for fewer than 3 points or a constant series.
double pearson(const std::vector<double>& x, const std::vector<double>& y);

// Number of successive steps in which v rises (sign > 0) or falls (sign < 0) strictly.
int monotone_steps(const std::vector<double>& v, int sign);

}  // namespace stethogen::validation
