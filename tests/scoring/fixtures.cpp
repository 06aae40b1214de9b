#include "fixtures.hpp"

#include <cmath>
#include <numbers>

#include <fmt/format.h>

#include "core/random.hpp"

namespace stethogen::test {
namespace {

void add_event(Record& r, std::int32_t beat, EventKind kind, std::int32_t site, double onset_s, double offset_s) {
  Event e;
  e.beat = beat;
  e.kind = kind;
  e.site = site;
  e.onset_s = onset_s;
  e.offset_s = offset_s;
  e.peak_s = onset_s + 0.4 * (offset_s - onset_s);
  e.onset_index = std::llround(onset_s * r.sample_rate_hz);
  e.peak_index = std::llround(e.peak_s * r.sample_rate_hz);
  e.offset_index = std::llround(offset_s * r.sample_rate_hz);
  r.events.push_back(e);
}

// A Hann-windowed tone burst added to one site's clean signal.
void add_burst(Record& r, std::size_t site, double onset_s, double offset_s, double freq_hz, double amplitude) {
  const double fs = r.sample_rate_hz;
  auto k0 = static_cast<std::size_t>(std::ceil(onset_s * fs));
  auto k1 = std::min(static_cast<std::size_t>(offset_s * fs), r.pcg_clean.n_samples);
  for (std::size_t k = k0; k < k1; ++k) {
    double u = (k / fs - onset_s) / (offset_s - onset_s);
    r.pcg_clean.at(site, k) += static_cast<float>(amplitude * 0.5 * (1 - std::cos(2 * std::numbers::pi * u)) *
                                                  std::sin(2 * std::numbers::pi * freq_hz * (k / fs - onset_s)));
  }
}

}  // namespace

Record fixture_record(const FixtureSpec& spec) {
  Record r;
  r.subject.record_id = spec.record_id;
  r.subject.population = spec.population;
  r.subject.state = spec.state;
  r.subject.severity = spec.severity;
  r.subject.exercise_intensity = spec.exercise_intensity;
  r.subject.sample_rate_hz = spec.sample_rate_hz;
  r.subject.sites = spec.sites;
  r.subject.params.duration_s = spec.duration_s;
  r.subject.params.snr_db = spec.snr_db;
  r.sample_rate_hz = spec.sample_rate_hz;
  r.sites = spec.sites;
  const auto n = static_cast<std::size_t>(std::llround(spec.duration_s * spec.sample_rate_hz));
  const std::size_t n_sites = spec.sites.size();
  r.pcg_clean = SiteArray<float>(n_sites, n);
  r.states = SiteArray<std::uint8_t>(n_sites, n, 0);
  r.summary.heart_rate_bpm = spec.heart_rate_bpm;
  r.summary.snr_target_db = r.summary.snr_achieved_db = spec.snr_db.value_or(std::nan(""));

  const double rr_s = 60.0 / spec.heart_rate_bpm;
  std::int32_t beat = 0;
  for (double s1 = 0.3; s1 + 0.12 < spec.duration_s; s1 += rr_s, ++beat) {
    double s2 = s1 + 0.30;
    BeatRow row;
    row.beat = beat;
    row.activation_s = s1 - 0.06;
    row.rr_s = rr_s;
    r.beats.push_back(row);
    add_event(r, beat, EventKind::S1, -1, s1, s1 + 0.12);
    if (s2 + 0.09 < spec.duration_s) add_event(r, beat, EventKind::S2, -1, s2, s2 + 0.09);
    for (std::size_t site = 0; site < n_sites; ++site) {
      double delay = 0.002 * static_cast<double>(site);
      add_event(r, beat, EventKind::S1, static_cast<std::int32_t>(site), s1 + delay, s1 + 0.12 + delay);
      add_burst(r, site, s1 + delay, s1 + 0.12 + delay, 60, 0.5);
      if (s2 + 0.09 < spec.duration_s) {
        add_event(r, beat, EventKind::S2, static_cast<std::int32_t>(site), s2 + delay, s2 + 0.09 + delay);
        add_burst(r, site, s2 + delay, s2 + 0.09 + delay, 90, 0.4);
      }
    }
  }
  // States from the site's own events: S1, systole until S2, S2, diastole until the next S1.
  for (std::size_t site = 0; site < n_sites; ++site) {
    std::vector<const Event*> own;
    for (const Event& e : r.events)
      if (e.site == static_cast<std::int32_t>(site)) own.push_back(&e);
    for (std::size_t i = 0; i < own.size(); ++i) {
      auto on = static_cast<std::size_t>(own[i]->onset_index), off = static_cast<std::size_t>(own[i]->offset_index);
      auto next = i + 1 < own.size() ? static_cast<std::size_t>(own[i + 1]->onset_index) : n;
      bool is_s1 = own[i]->kind == EventKind::S1;
      for (std::size_t k = on; k < std::min(off, n); ++k) r.states.at(site, k) = is_s1 ? 1 : 3;
      for (std::size_t k = off; k < std::min(next, n); ++k) r.states.at(site, k) = is_s1 ? 2 : 4;
    }
  }
  r.pcg = r.pcg_clean;
  if (spec.snr_db) {
    r.summary.stationary_noise = {"sensor_white"};
    // White noise scaled to the SNR over the whole record (signal and noise mean powers).
    RandomStream rng(spec.seed, 0, 77);
    for (std::size_t site = 0; site < n_sites; ++site) {
      double power = 0;
      for (std::size_t k = 0; k < n; ++k) power += r.pcg_clean.at(site, k) * r.pcg_clean.at(site, k);
      double sd = std::sqrt(power / n / std::pow(10, *spec.snr_db / 10));
      for (std::size_t k = 0; k < n; ++k) r.pcg.at(site, k) += static_cast<float>(rng.normal(0, sd));
    }
  }
  return r;
}

std::string states_as_csv(const Record& r, std::size_t site, double shift_s, bool header) {
  static const char* kStateNames[5] = {"", "S1", "systole", "S2", "diastole"};
  std::string csv = header ? "record_id,site,start_s,end_s,state\n" : "";
  const double fs = r.sample_rate_hz;
  std::size_t n = r.states.n_samples, start = 0;
  for (std::size_t k = 1; k <= n; ++k) {
    if (k < n && r.states.at(site, k) == r.states.at(site, start)) continue;
    std::uint8_t label = r.states.at(site, start);
    double a = std::max(0.0, start / fs + shift_s), b = std::min(n / fs, k / fs + shift_s);
    if (label != 0 && b > a)
      csv += fmt::format("{},{},{},{},{}\n", r.subject.record_id, name(r.sites[site]), a, b, kStateNames[label]);
    start = k;
  }
  return csv;
}

}  // namespace stethogen::test
