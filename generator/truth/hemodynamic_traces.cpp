#include "generator/truth/hemodynamic_traces.hpp"

#include <soxr.h>

#include <algorithm>
#include <cmath>
#include <string>

#include "core/error.hpp"

namespace stethogen::gen {
namespace {

struct Channel {
  const char* name;
  const char* unit;
  const std::vector<double> HemodynamicSeries::*trace;
};

constexpr Channel kChannels[] = {
    {"lv_pressure", "mmHg", &HemodynamicSeries::p_lv},
    {"aortic_pressure", "mmHg", &HemodynamicSeries::p_ao},
    {"la_pressure", "mmHg", &HemodynamicSeries::p_la},
    {"rv_pressure", "mmHg", &HemodynamicSeries::p_rv},
    {"pulmonary_pressure", "mmHg", &HemodynamicSeries::p_pa},
    {"ra_pressure", "mmHg", &HemodynamicSeries::p_ra},
    {"lv_volume", "mL", &HemodynamicSeries::v_lv},
    {"rv_volume", "mL", &HemodynamicSeries::v_rv},
    {"mitral_flow", "mL/s", &HemodynamicSeries::q_mitral},
    {"tricuspid_flow", "mL/s", &HemodynamicSeries::q_tricuspid},
    {"aortic_flow", "mL/s", &HemodynamicSeries::q_aortic},
    {"pulmonic_flow", "mL/s", &HemodynamicSeries::q_pulmonic},
};

}  // namespace

HemodynamicTraces hemodynamic_traces(const CirculationResult& circulation, double rate_hz) {
  const HemodynamicSeries& s = circulation.series;
  HemodynamicTraces out;
  out.sample_rate_hz = rate_hz;
  constexpr std::size_t n_channels = std::size(kChannels);
  std::size_t n_out = 0;
  if (s.size() >= 2) n_out = static_cast<std::size_t>(std::ceil(circulation.duration_s * rate_hz - 1e-9));
  out.data = SiteArray<float>(n_channels, n_out);

  const std::size_t n_resampled = static_cast<std::size_t>(std::ceil(s.size() * rate_hz / s.rate_hz)) + 1;
  std::vector<double> resampled(n_resampled);
  soxr_io_spec_t io = soxr_io_spec(SOXR_FLOAT64_I, SOXR_FLOAT64_I);
  soxr_quality_spec_t quality = soxr_quality_spec(SOXR_HQ, 0);
  for (std::size_t c = 0; c < n_channels; ++c) {
    out.names.emplace_back(kChannels[c].name);
    out.units.emplace_back(kChannels[c].unit);
    if (out.data.n_samples == 0) continue;
    const std::vector<double>& trace = s.*(kChannels[c].trace);
    std::size_t done = 0;
    soxr_error_t err = soxr_oneshot(s.rate_hz, rate_hz, 1, trace.data(), trace.size(), nullptr,
                                    resampled.data(), resampled.size(), &done, &io, &quality, nullptr);
    if (err) throw RuntimeFailure(std::string("resampling hemodynamic traces: ") + err);
    // Resampled sample j lies at t0 + j / rate; interpolate onto the record grid k / rate.
    float* row = out.data.row(c);
    for (std::size_t k = 0; k < n_out; ++k) {
      double pos = (static_cast<double>(k) / rate_hz - s.t0_s) * rate_hz;
      auto j = static_cast<std::size_t>(std::max(0.0, std::floor(pos)));
      if (j + 1 >= done) j = done >= 2 ? done - 2 : 0;
      double frac = std::clamp(pos - static_cast<double>(j), 0.0, 1.0);
      row[k] = static_cast<float>(resampled[j] + frac * (resampled[j + 1] - resampled[j]));
    }
  }
  return out;
}

}  // namespace stethogen::gen
