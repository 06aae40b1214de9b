// A synthetic Record for writer and reader tests (invented values; the pipeline is not needed).
#pragma once

#include <cmath>
#include <string>

#include "core/random.hpp"
#include "core/record.hpp"

namespace stethogen::test {

inline Record make_test_record(std::uint64_t index, std::size_t n_samples = 8000, int rate_hz = 2000) {
  Record r;
  SubjectSpec& s = r.subject;
  s.dataset_seed = 7;
  s.record_index = index;
  s.record_id = "r" + std::string(6 - std::to_string(index).size(), '0') + std::to_string(index);
  s.population = index % 2 ? "harbour_crew" : "lighthouse_keepers";
  s.state = index % 2 ? State::exercise : State::lv_failure;
  s.exercise_intensity = index % 2 ? 0.5 : 0.0;
  s.severity = index % 2 ? 0.0 : 0.25;
  s.sample_rate_hz = rate_hz;
  s.sites = {Site::aortic, Site::mitral};
  s.noise_profile_name = "ward";
  r.sample_rate_hz = rate_hz;
  r.sites = s.sites;
  RandomStream rng(7, index, Stream::plan);
  r.pcg = SiteArray<float>(2, n_samples);
  r.pcg_clean = SiteArray<float>(2, n_samples);
  r.states = SiteArray<std::uint8_t>(2, n_samples);
  for (std::size_t site = 0; site < 2; ++site)
    for (std::size_t k = 0; k < n_samples; ++k) {
      double clean = 0.4 * std::sin(2 * M_PI * 40.0 * k / rate_hz) * std::exp(-double(k % 1600) / 200.0);
      r.pcg_clean.at(site, k) = static_cast<float>(clean);
      r.pcg.at(site, k) = static_cast<float>(clean + 0.01 * rng.normal());
      r.states.at(site, k) = static_cast<std::uint8_t>(1 + (k / 400) % 4);
    }
  r.pcg.at(0, 3) = 1.5f;  // beyond full scale: integer storage clips it
  for (int b = 0; b < 3; ++b) {
    Event e;
    e.beat = b;
    e.kind = EventKind::M1;
    e.site = -1;
    e.onset_s = 0.1 + b * 0.8;
    e.peak_s = e.onset_s + 0.01;
    e.offset_s = e.onset_s + 0.05;
    e.onset_index = std::lround(e.onset_s * rate_hz);
    e.peak_index = std::lround(e.peak_s * rate_hz);
    e.offset_index = std::lround(e.offset_s * rate_hz);
    r.events.push_back(e);
    e.kind = EventKind::aortic_close;
    e.site = 1;
    r.events.push_back(e);
    BeatRow beat;
    beat.beat = b;
    beat.activation_s = 0.05 + b * 0.8;
    beat.rr_s = 0.8;
    beat.resp_phase = 0.1 * b;
    beat.inspiration = b % 2;
    beat.lv_stroke_volume_ml = 70 + b;
    beat.a2p2_split_ms = 30 - b;
    r.beats.push_back(beat);
  }
  r.artifacts.push_back({"friction", 0, 1.0, 1.25, -6.0});
  r.hemodynamics.sample_rate_hz = 250;
  r.hemodynamics.names = {"lv_pressure", "lv_volume"};
  r.hemodynamics.units = {"mmHg", "mL"};
  r.hemodynamics.data = SiteArray<float>(2, n_samples / 8);
  for (std::size_t k = 0; k < n_samples / 8; ++k) {
    r.hemodynamics.data.at(0, k) = static_cast<float>(60 + 50 * std::sin(k * 0.03));
    r.hemodynamics.data.at(1, k) = static_cast<float>(100 + 20 * std::cos(k * 0.03));
  }
  r.summary.heart_rate_bpm = 75;
  r.summary.cardiac_output_l_min = 5.1;
  r.summary.lv_ejection_fraction = 0.6;
  r.summary.rv_ejection_fraction = 0.55;
  r.summary.snr_target_db = 12;
  r.summary.snr_achieved_db = 11.9;
  r.summary.stationary_noise = {"sensor", "room"};
  return r;
}

}  // namespace stethogen::test
