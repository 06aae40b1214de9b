// Truth definitions: envelope timing, four-state labels, the record window rule.
#include <catch2/catch.hpp>

#include <cmath>
#include <complex>

#include "generator/sources/heart_sounds.hpp"
#include "generator/transmission/render.hpp"
#include "generator/truth/heart_level.hpp"
#include "generator/truth/hemodynamic_traces.hpp"
#include "generator/truth/labels.hpp"
#include "generator/truth/record_truth.hpp"
#include "python_reference.hpp"
#include "synthetic_circulation.hpp"

using namespace stethogen;
using namespace stethogen::gen;

TEST_CASE("sampled envelope timing agrees with the closed form", "[truth]") {
  SoundComponent c;
  c.start_s = 0.1;
  c.amplitude = 2.0;
  c.tau_s = 0.009;
  c.f_start_hz = c.f_end_hz = 60;
  const double fs = 1000;
  std::vector<double> env(300);
  for (std::size_t i = 0; i < env.size(); ++i) env[i] = c.envelope(i / fs);
  SoundTiming t = measure_envelope(env.data(), env.size(), 0.0, fs, kEnvelopeThreshold);
  // Linear interpolation of a smooth envelope at 1 kHz: within a quarter sample.
  REQUIRE(t.onset_s == Approx(c.onset_s()).margin(0.25 / fs));
  REQUIRE(t.peak_s == Approx(c.peak_s()).margin(0.25 / fs));
  REQUIRE(t.offset_s == Approx(c.offset_s()).margin(0.25 / fs));
  REQUIRE(t.peak_envelope == Approx(2.0).epsilon(1e-3));
}

TEST_CASE("timing from the analytic signal equals timing from its power and from its envelope", "[truth]") {
  // A filtered-like transient starting at sample lo of its buffer (before it: values to ignore),
  // and one with a flat top, where distinct powers share a root.
  for (bool flat_top : {false, true}) {
    const std::size_t n = 901, lo = 37;
    std::vector<std::complex<double>> z(n, {5.0, -3.0});
    std::vector<double> power(n, 0.0), envelope(n, 0.0);
    for (std::size_t i = lo; i < n; ++i) {
      const double x = (i - lo) / 40.0, a = flat_top ? std::min(1.0, 3 * x * std::exp(1.0 - x)) : x * x * std::exp(2.0 - x) / 4;
      z[i] = std::polar(a, 0.37 * i);
      power[i] = std::norm(z[i]);
      envelope[i] = std::sqrt(power[i]);
    }
    double largest = 0;
    for (double p : power) largest = std::max(largest, p);
    const SoundTiming a = measure_analytic(z.data(), lo, n, largest, 0.25, 4000.0, kEnvelopeThreshold);
    const SoundTiming b = measure_power(power.data(), n, 0.25, 4000.0, kEnvelopeThreshold);
    const SoundTiming c = measure_envelope(envelope.data(), n, 0.25, 4000.0, kEnvelopeThreshold);
    INFO("flat top " << flat_top);
    REQUIRE(a.valid());
    for (const SoundTiming* t : {&b, &c}) {
      REQUIRE(a.onset_s == t->onset_s);
      REQUIRE(a.peak_s == t->peak_s);
      REQUIRE(a.offset_s == t->offset_s);
      REQUIRE(a.peak_envelope == t->peak_envelope);
    }
  }
  // All zero after lo: no timing.
  std::vector<std::complex<double>> silent(50, {1.0, 1.0});
  for (std::size_t i = 10; i < silent.size(); ++i) silent[i] = 0;
  REQUIRE_FALSE(measure_analytic(silent.data(), 10, silent.size(), 0.0, 0.0, 4000.0, kEnvelopeThreshold).valid());
}

TEST_CASE("four-state labels follow S1 and S2 intervals", "[truth]") {
  std::vector<std::uint8_t> labels(20);
  // At 10 Hz: S2 [-0.5,-0.3), S1 [0.2, 0.4), S2 [0.9, 1.1), S1 [1.5, 1.7).
  label_states({{true, 0.2, 0.4}, {false, -0.5, -0.3}, {false, 0.9, 1.1}, {true, 1.5, 1.7}}, {}, 10.0, labels.data(),
               labels.size());
  const std::uint8_t expected[20] = {4, 4, 1, 1, 2, 2, 2, 2, 2, 3, 3, 4, 4, 4, 4, 1, 1, 0, 0, 0};
  for (int i = 0; i < 20; ++i) {
    INFO("sample " << i);
    REQUIRE(labels[i] == expected[i]);
  }
  // Overlap: the later sound takes over at its onset.
  label_states({{true, 0.0, 0.5}, {false, 0.3, 0.6}}, {}, 10.0, labels.data(), 10);
  REQUIRE(labels[2] == 1);
  REQUIRE(labels[3] == 3);
  REQUIRE(labels[6] == 0);
}

TEST_CASE("four-state labels take the phase from the valve closures between sounds of one kind", "[truth]") {
  std::vector<std::uint8_t> labels(20);
  // At 10 Hz: S1 [0.0, 0.2) then, with its S2 missing, S1 [0.8, 1.0): systole up to the aortic
  // closure at 0.45, diastole after it. Then S2 [1.1, 1.3) and S2 [1.6, 1.8) with the S1 between
  // them lost (overlapped): diastole up to the AV closure at 1.45, systole after it.
  label_states({{true, 0.0, 0.2}, {true, 0.8, 1.0}, {false, 1.1, 1.3}, {false, 1.6, 1.8}},
               {{-0.1, 1.45}, {0.45, 1.55}}, 10.0, labels.data(), labels.size());
  const std::uint8_t expected[20] = {1, 1, 2, 2, 2, 4, 4, 4, 1, 1, 2, 3, 3, 4, 4, 2, 3, 3, 0, 0};
  for (int i = 0; i < 20; ++i) {
    INFO("sample " << i);
    REQUIRE(labels[i] == expected[i]);
  }
  // Closures inside a sound do not count (the AV closure at 0.15 lies in the first S2); without
  // one in the gap [0.2, 0.6) the phase changes halfway, at 0.4.
  label_states({{false, 0.0, 0.2}, {false, 0.6, 0.8}}, {{0.15}, {}}, 10.0, labels.data(), 10);
  const std::uint8_t halfway[10] = {3, 3, 4, 4, 2, 2, 3, 3, 0, 0};
  for (int i = 0; i < 10; ++i) {
    INFO("sample " << i);
    REQUIRE(labels[i] == halfway[i]);
  }
}

TEST_CASE("only events and beats inside the record window are kept; labels cover it", "[truth]") {
  CirculationResult circ = test::synthetic_circulation({});
  auto components = heart_sound_sources(circ, SourceVariation{});
  auto groups = group_components(components);
  SubjectSpec subject;
  subject.sample_rate_hz = 2000;
  subject.sites = {Site::aortic, Site::mitral};
  TransmissionPlan plan = plan_transmission(subject);
  const std::size_t n = 4000;
  Rendering r = render_sites(components, groups, plan, n);
  Truth truth = build_truth({circ, components, groups, r, 2000, n});

  REQUIRE(truth.beats.size() == 2);  // activations at 0 and 1 s
  REQUIRE(truth.beats[0].beat == 0);
  REQUIRE(truth.beats[0].activation_s == 0.0);
  int s1_heart = 0, per_site = 0;
  for (const Event& e : truth.events) {
    REQUIRE(e.onset_s >= 0);
    REQUIRE(e.offset_s < 2.0);
    REQUIRE(e.onset_index == std::llround(e.onset_s * 2000));
    REQUIRE(e.onset_s <= e.peak_s);
    REQUIRE(e.peak_s <= e.offset_s);
    s1_heart += e.kind == EventKind::S1 && e.site == -1;
    per_site += e.site >= 0;
  }
  REQUIRE(s1_heart == 2);
  REQUIRE(per_site > 0);
  std::size_t unlabelled = 0;
  for (std::uint8_t l : truth.states.data) unlabelled += l == 0;
  REQUIRE(unlabelled == 0);
  // The A2-P2 split is the onset difference at the heart level (P2 closes 30 ms after A2 here).
  REQUIRE(truth.beats[0].a2p2_split_ms > 20);
  REQUIRE(truth.beats[0].a2p2_split_ms < 40);
  REQUIRE(truth.beats[0].s1_amplitude > truth.beats[0].s2_amplitude * 0.5);
}

TEST_CASE("hemodynamic traces: band-limited resampling aligned to the record grid", "[truth]") {
  CirculationResult circ = test::synthetic_circulation({});
  // A slow sine on an unaligned series start: the 250 Hz trace must sample it at k / 250 s.
  circ.series.t0_s = -1.0003;
  for (std::size_t k = 0; k < circ.series.size(); ++k)
    circ.series.p_lv[k] = 50.0 + 20.0 * std::sin(2.0 * M_PI * 1.3 * circ.series.time_at(k));
  HemodynamicTraces h = hemodynamic_traces(circ);
  REQUIRE(h.sample_rate_hz == 250.0);
  REQUIRE(h.names.size() == 12);
  REQUIRE(h.names[0] == "lv_pressure");
  REQUIRE(h.units[0] == "mmHg");
  REQUIRE(h.data.n_samples == 500);  // 2 s at 250 Hz
  for (std::size_t k = 0; k < h.data.n_samples; ++k) {
    double expected = 50.0 + 20.0 * std::sin(2.0 * M_PI * 1.3 * k / 250.0);
    // The filter evaluated at the record grid's phase (no interpolation between outputs): a
    // 1.3 Hz sine passes with unit gain and no delay, to float32 storage and passband ripple.
    REQUIRE(h.data.at(0, k) == Approx(expected).margin(1e-3));
  }
}

TEST_CASE("hemodynamic traces: the decimation of scipy.signal.resample_poly", "[truth]") {
  CirculationResult circ = test::synthetic_circulation({});
  // Series start on the 2 kHz grid, 1 s before the record: output k is resample_poly's output
  // 250 + k. A pulse-like trace with content above the 125 Hz output Nyquist frequency.
  circ.series.t0_s = -1.0;
  std::vector<double> x(circ.series.size());
  for (std::size_t k = 0; k < x.size(); ++k) {
    double t = circ.series.time_at(k);
    x[k] = 80.0 + 40.0 * std::sin(2.0 * M_PI * 1.2 * t) + 5.0 * std::sin(2.0 * M_PI * 60.0 * t) +
           3.0 * std::sin(2.0 * M_PI * 300.0 * t) + (std::fmod(t + 5.0, 0.8) < 0.3 ? 20.0 : 0.0);
  }
  circ.series.p_lv = x;
  HemodynamicTraces h = hemodynamic_traces(circ);
  // scipy.signal.resample_poly(x, 1, 8) with its default Kaiser (beta 5) FIR.
  std::vector<double> ref = test::run_reference("resample_poly " + test::write_samples("trace", x) + " 8");
  REQUIRE(ref.size() >= 250 + h.data.n_samples);
  for (std::size_t k = 0; k < h.data.n_samples; ++k) {
    INFO("sample " << k);
    REQUIRE(h.data.at(0, k) == Approx(ref[250 + k]).margin(1e-4));  // float32 storage of ~100 mmHg
  }
}

TEST_CASE("heart-level S1/S2 peak: the windowed search finds the peak of the whole summed waveform", "[truth]") {
  // Two members of one group; the peak of |z1 + z2| searched by brute force on the whole 8 kHz
  // grid (analytic() at every point) against heart_level_group_timing's window.
  for (double second_amplitude : {1.0, 0.3, 0.05}) {
    for (double lag_s : {0.0, 0.012, 0.04}) {
      std::vector<SoundComponent> cs(2);
      cs[0].kind = EventKind::M1, cs[0].start_s = 0.1, cs[0].amplitude = 1.0, cs[0].tau_s = 0.009;
      cs[0].f_start_hz = 120, cs[0].f_end_hz = 45, cs[0].chirp_tau_s = 0.018;
      cs[1].kind = EventKind::T1, cs[1].start_s = 0.1 + lag_s, cs[1].amplitude = second_amplitude,
      cs[1].tau_s = 0.012, cs[1].f_start_hz = 90, cs[1].f_end_hz = 38, cs[1].chirp_tau_s = 0.024;
      SoundGroup group{EventKind::S1, 0, {0, 1}};
      const SoundTiming t = heart_level_group_timing(group, cs);
      const double begin = 0.1, end = std::max(cs[0].support_end_s(), cs[1].support_end_s());
      std::vector<double> env;
      for (std::size_t i = 0; begin + i / 8000.0 <= end; ++i)
        env.push_back(std::abs(cs[0].analytic(begin + i / 8000.0) + cs[1].analytic(begin + i / 8000.0)));
      const SoundTiming full = measure_envelope(env.data(), env.size(), begin, 8000.0, kEnvelopeThreshold);
      INFO("second amplitude " << second_amplitude << ", lag " << lag_s);
      REQUIRE(t.peak_s == Approx(full.peak_s).margin(1e-9));
      REQUIRE(t.peak_envelope == Approx(full.peak_envelope).epsilon(1e-9));
    }
  }
}
