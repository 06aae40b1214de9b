// Source laws on hand-built hemodynamics, component morphology against scipy/numpy.
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <numeric>

#include "generator/sources/heart_sounds.hpp"
#include "python_reference.hpp"
#include "synthetic_circulation.hpp"

using namespace stethogen;
using namespace stethogen::gen;

namespace {

const SourceVariation kNoVariation{};

// The component of the given kind anchored in the beat whose activation is at 0 s.
SoundComponent find(const std::vector<SoundComponent>& cs, EventKind kind) {
  for (const SoundComponent& c : cs)
    if (c.kind == kind && c.beat == 1) return c;
  FAIL("component missing");
  return {};
}

SoundComponent component_for(EventKind kind, const test::SyntheticBeatShape& shape) {
  return find(heart_sound_sources(test::synthetic_circulation(shape), kNoVariation), kind);
}

std::vector<double> render_real(const std::vector<SoundComponent>& cs, double t0, double t1, double fs) {
  std::vector<double> x(static_cast<std::size_t>((t1 - t0) * fs));
  for (std::size_t i = 0; i < x.size(); ++i)
    for (const SoundComponent& c : cs) x[i] += c.analytic(t0 + i / fs).real();
  return x;
}

}  // namespace

TEST_CASE("AV closure loudness is proportional to the isovolumic pressure slope", "[sources]") {
  test::SyntheticBeatShape slow, fast;
  fast.lv_rise_mmhg_s = 2 * slow.lv_rise_mmhg_s;
  fast.rv_rise_mmhg_s = 2 * slow.rv_rise_mmhg_s;
  // S1 amplitude rises linearly with LV dP/dt (trade fact; a 1965 canine study, Circ Res 16:45, from memory).
  REQUIRE(component_for(EventKind::M1, fast).amplitude / component_for(EventKind::M1, slow).amplitude ==
          Approx(2.0).epsilon(0.02));
  REQUIRE(component_for(EventKind::T1, fast).amplitude / component_for(EventKind::T1, slow).amplitude ==
          Approx(2.0).epsilon(0.02));
  // Same law for both sides: the right side's lower pressures make T1 the softer (trade fact).
  REQUIRE(component_for(EventKind::M1, slow).amplitude > 2 * component_for(EventKind::T1, slow).amplitude);
}

TEST_CASE("semilunar closure: louder and higher pitched under a higher arterial load", "[sources]") {
  test::SyntheticBeatShape normal, high;
  high.aortic_close_mmhg = 140;
  high.pa_close_mmhg = 40;
  for (EventKind k : {EventKind::A2, EventKind::P2}) {
    SoundComponent a = component_for(k, normal), b = component_for(k, high);
    REQUIRE(b.amplitude > a.amplitude);
    REQUIRE(b.f_end_hz > a.f_end_hz);
    REQUIRE(b.f_start_hz > b.f_end_hz);
  }
  // Left louder than right at normal pressures (trade fact).
  REQUIRE(component_for(EventKind::A2, normal).amplitude > component_for(EventKind::P2, normal).amplitude);
}

TEST_CASE("filling sounds grow with the inflow deceleration and the ventricle's stiffness", "[sources]") {
  test::SyntheticBeatShape compliant, stiff;
  stiff.e_wave_decel_ml_s2 = 3 * compliant.e_wave_decel_ml_s2;
  stiff.a_wave_decel_ml_s2 = 3 * compliant.a_wave_decel_ml_s2;
  REQUIRE(component_for(EventKind::S3, stiff).amplitude > 2 * component_for(EventKind::S3, compliant).amplitude);
  // S4 louder as diastolic stiffness rises: a stiffer ventricle checks the same atrial inflow
  // faster (trade fact).
  REQUIRE(component_for(EventKind::S4, stiff).amplitude > 2 * component_for(EventKind::S4, compliant).amplitude);
  // Faint in a compliant heart: well below S1 (trade fact).
  REQUIRE(component_for(EventKind::S3, compliant).amplitude < 0.2 * component_for(EventKind::M1, compliant).amplitude);
  REQUIRE(component_for(EventKind::S4, compliant).amplitude < 0.2 * component_for(EventKind::M1, compliant).amplitude);
}

TEST_CASE("A2 and P2: narrow-band transients of 50-60 ms whose frequency falls", "[sources]") {
  const double fs = 4000;
  for (EventKind kind : {EventKind::A2, EventKind::P2}) {
    SoundComponent c = component_for(kind, {});
    double duration_ms = 1e3 * (c.offset_s() - c.onset_s());
    INFO(name(kind) << " duration " << duration_ms << " ms");
    // Xu, Durand & Pibarot 2000 (IEEE Trans Biomed Eng 47:1328): A2/P2 last about 50-60 ms;
    // 40-80 ms allows for our envelope threshold definition.
    REQUIRE(duration_ms > 40);
    REQUIRE(duration_ms < 80);
    double t0 = c.start_s - 0.05, t1 = c.support_end_s() + 0.05;
    std::vector<double> x = render_real({c}, t0, t1, fs);
    std::string path = test::write_samples("a2", x);
    // Instantaneous frequency from scipy.signal.hilbert, over the component's main lobe.
    std::vector<double> f = test::run_reference("inst_freq " + path + " " + std::to_string(fs));
    std::remove(path.c_str());
    REQUIRE(f.size() == x.size());
    auto at = [&](double t) { return f[static_cast<std::size_t>((t - t0) * fs)]; };
    double early = at(c.peak_s() - 0.3 * (c.peak_s() - c.onset_s()));
    double late = at(c.peak_s() + 0.6 * (c.offset_s() - c.peak_s()));
    INFO("instantaneous frequency " << early << " Hz -> " << late << " Hz");
    // Xu et al. 2000: the instantaneous frequency falls within each component.
    REQUIRE(late < 0.85 * early);
  }
}

TEST_CASE("components are band-limited: sampling at 1 kHz is alias-free", "[sources]") {
  auto cs = heart_sound_sources(test::synthetic_circulation({}), kNoVariation);
  const double fs = 48000;
  std::vector<double> x = render_real(cs, 0.0, 1.0, fs);
  std::string path = test::write_samples("band", x);
  // numpy.fft: the energy above 500 Hz (the Nyquist frequency of the lowest output rate) is
  // below -60 dB of the total.
  std::vector<double> above = test::run_reference("band_energy 48000 500 24000 " + path);
  std::remove(path.c_str());
  REQUIRE(above.size() == 1);
  REQUIRE(above[0] < 1e-6);
}

TEST_CASE("source variation is reproducible, keyed by the record and scaled by its SD", "[sources]") {
  SubjectSpec a;
  a.dataset_seed = 9;
  a.record_index = 3;
  a.params.source_variation = 0.1;
  SubjectSpec b = a;
  b.record_index = 4;
  SourceVariation va = draw_source_variation(a), va2 = draw_source_variation(a), vb = draw_source_variation(b);
  int differ = 0;
  for (int i = 0; i < kComponentCount; ++i) {
    REQUIRE(va[i].gain == va2[i].gain);
    differ += va[i].gain != vb[i].gain;
    REQUIRE(std::abs(std::log(va[i].gain)) < 0.6);  // 6 SD
  }
  REQUIRE(differ == kComponentCount);
  a.params.source_variation = 0;
  for (const ComponentVariation& c : draw_source_variation(a)) {
    REQUIRE(c.gain == 1.0);
    REQUIRE(c.pitch == 1.0);
  }
}

TEST_CASE("block rendering equals the closed-form waveform", "[sources]") {
  SoundComponent c = component_for(EventKind::A2, {});
  const double fs = 4000, t0 = c.start_s - 0.01;
  std::vector<std::complex<double>> z(2000);
  c.render(t0, fs, z.size(), 0.5, z.data());
  for (std::size_t i = 0; i < z.size(); ++i)
    REQUIRE(std::abs(z[i] - 0.5 * c.analytic(t0 + i / fs)) < 1e-12 * c.amplitude);
}
