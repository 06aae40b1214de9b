// Chest-wall and sensor filters against scipy.signal, and the output stage.
#include <catch2/catch.hpp>

#include <cmath>
#include <complex>
#include <cstring>
#include <numbers>
#include <string>
#include <vector>

#include "generator/transmission/chest_wall.hpp"
#include "generator/transmission/sensor.hpp"
#include "python_reference.hpp"

using namespace stethogen;
using namespace stethogen::gen;

namespace {

// Magnitude (dB) of the implemented filter, measured from its impulse response through
// filter_in_place (not from the coefficients), at each frequency.
std::vector<double> measured_response_db(const FilterCascade& c, double fs, const std::vector<double>& freqs) {
  double tau = std::max(c.slowest_time_constant_s(fs), 1e-3);
  auto n = static_cast<std::size_t>(40.0 * tau * fs) + 64;
  std::vector<double> h(n, 0.0);
  h[0] = 1.0;
  filter_in_place(c, h.data(), n);
  std::vector<double> out;
  for (double f : freqs) {
    std::complex<double> acc{};
    for (std::size_t i = 0; i < n; ++i) acc += h[i] * std::polar(1.0, -2.0 * std::numbers::pi * f * i / fs);
    out.push_back(20.0 * std::log10(std::abs(acc)));
  }
  return out;
}

double db(std::complex<double> h) { return 20.0 * std::log10(std::abs(h)); }

// scipy.signal.sosfreqz of the same coefficients against the implemented responses (one
// reference run for all the filters of one rate).
void require_matches_scipy(const std::vector<std::pair<std::string, FilterCascade>>& filters, double fs) {
  std::vector<double> freqs;
  std::string list;
  for (double f : {10.0, 25.0, 40.0, 66.0, 100.0, 150.0, 200.0, 300.0, 400.0, 450.0})
    if (f < 0.5 * fs) {
      freqs.push_back(f);
      list += (list.empty() ? "" : ",") + std::to_string(f);
    }
  std::string files;
  std::vector<std::string> paths;
  for (std::size_t i = 0; i < filters.size(); ++i) {
    paths.push_back(test::write_cascade("sos" + std::to_string(i), filters[i].second));
    files += " " + paths.back();
  }
  std::vector<double> ref = test::run_reference("freqz " + std::to_string(fs) + " " + list + files);
  REQUIRE(ref.size() == freqs.size() * filters.size());
  for (std::size_t k = 0; k < filters.size(); ++k) {
    std::vector<double> got = measured_response_db(filters[k].second, fs, freqs);
    for (std::size_t i = 0; i < freqs.size(); ++i) {
      INFO(filters[k].first << " at " << freqs[i] << " Hz, fs " << fs);
      // Tolerance from the issue: within 0.5 dB of scipy.signal.
      REQUIRE(got[i] == Approx(ref[k * freqs.size() + i]).margin(0.5));
    }
  }
  for (const std::string& p : paths) std::remove(p.c_str());
}

}  // namespace

TEST_CASE("Butterworth sections equal scipy.signal.butter designs", "[filters]") {
  struct Case { int order; const char* kind; double fc, fs; };
  const std::vector<Case> cases = {{1, "lowpass", 100, 4000}, {1, "highpass", 20, 1000}, {2, "lowpass", 250, 4000},
                                   {2, "highpass", 10, 48000}, {2, "lowpass", 2000, 8000}};
  std::string specs;
  for (const Case& k : cases)
    specs += " " + std::to_string(k.order) + ":" + k.kind + ":" + std::to_string(k.fc) + ":" + std::to_string(k.fs);
  // Reference: scipy.signal.butter(order, fc, kind, fs=fs, output='sos').
  std::vector<double> ref = test::run_reference("butter" + specs);
  REQUIRE(ref.size() == 5 * cases.size());
  for (std::size_t i = 0; i < cases.size(); ++i) {
    const Case& k = cases[i];
    std::string kind = k.kind;
    Biquad ours = kind == "lowpass" ? (k.order == 1 ? butter_lowpass1(k.fc, k.fs) : butter_lowpass2(k.fc, k.fs))
                                    : (k.order == 1 ? butter_highpass1(k.fc, k.fs) : butter_highpass2(k.fc, k.fs));
    const double* r = &ref[5 * i];
    INFO(kind << " order " << k.order << " fc " << k.fc << " fs " << k.fs);
    REQUIRE(ours.b0 == Approx(r[0]).epsilon(1e-9));
    REQUIRE(ours.b1 == Approx(r[1]).epsilon(1e-9).margin(1e-12));
    REQUIRE(ours.b2 == Approx(r[2]).epsilon(1e-9).margin(1e-12));
    REQUIRE(ours.a1 == Approx(r[3]).epsilon(1e-9).margin(1e-12));
    REQUIRE(ours.a2 == Approx(r[4]).epsilon(1e-9).margin(1e-12));
  }
}

TEST_CASE("chest-wall and sensor responses match scipy.signal.sosfreqz", "[filters]") {
  for (double fs : {1000.0, 4000.0, 48000.0}) {
    std::vector<std::pair<std::string, FilterCascade>> filters;
    for (double mm : {10.0, 20.0, 40.0})
      filters.emplace_back("chest wall " + std::to_string(mm) + " mm", chest_wall_filter(mm, fs));
    for (Sensor s : kAllSensors) filters.emplace_back(std::string(name(s)), sensor_response(s, fs));
    require_matches_scipy(filters, fs);
  }
}

TEST_CASE("chest wall: -6 to -12 dB/octave above 100 Hz, more loss when thicker", "[filters]") {
  const double fs = 4000;
  double previous_200 = 1e9;
  for (double mm : {15.0, 20.0, 30.0, 40.0}) {
    FilterCascade c = chest_wall_filter(mm, fs);
    double slope = db(c.response(400, fs)) - db(c.response(200, fs));
    INFO(mm << " mm: " << slope << " dB/octave");
    // Canine chest-wall transmission above 100 Hz: about -6 to -12 dB/octave (CHECK_VALUES.md,
    // from memory; half a dB of slack on each side for the memory).
    REQUIRE(slope <= -5.5);
    REQUIRE(slope >= -12.5);
    double at_200 = db(c.response(200, fs));
    REQUIRE(at_200 < previous_200);
    previous_200 = at_200;
  }
}

TEST_CASE("bell emphasises 40-110 Hz, diaphragm attenuates it", "[filters]") {
  const double fs = 4000;
  FilterCascade bell = sensor_response(Sensor::acoustic_bell, fs);
  FilterCascade diaphragm = sensor_response(Sensor::acoustic_diaphragm, fs);
  // Abella, Formolo & Penney 1992 (J Acoust Soc Am 91:2224, from memory): the bell boosts roughly
  // 40-110 Hz relative to higher frequencies, the diaphragm attenuates that band.
  for (double f : {40.0, 66.0, 110.0}) {
    INFO(f << " Hz");
    REQUIRE(db(bell.response(f, fs)) - db(bell.response(250, fs)) > 3.0);
    REQUIRE(db(diaphragm.response(f, fs)) - db(diaphragm.response(250, fs)) < -2.0);
    REQUIRE(db(bell.response(f, fs)) - db(diaphragm.response(f, fs)) > 3.0);
  }
  // Every sensor is normalised to 0 dB at the reference frequency.
  for (Sensor s : kAllSensors)
    REQUIRE(db(sensor_response(s, fs).response(kSensorReferenceHz, fs)) == Approx(0.0).margin(1e-9));
}

TEST_CASE("output stage: gain, clipping at full scale and 16-bit quantisation", "[filters]") {
  SiteArray<float> x(1, 6);
  const float in[6] = {0.1f, -0.3f, 0.6f, -0.7f, 0.2f, 1e-6f};
  std::copy(in, in + 6, x.row(0));
  auto clipped = apply_output_stage(x, 20.0 * std::log10(2.0), SampleFormat::int16, 1000);
  const double step = 1.0 / 32768.0;
  for (std::size_t i = 0; i < 6; ++i) {
    double v = x.at(0, i);
    // Integer sample codes (a 16-bit ADC): every value is a whole number of steps.
    REQUIRE(std::abs(v / step - std::round(v / step)) < 1e-6);
    REQUIRE(v <= 1.0 - step);
    REQUIRE(v >= -1.0);
  }
  REQUIRE(x.at(0, 0) == Approx(0.2).margin(step));
  REQUIRE(x.at(0, 2) == Approx(1.0 - step));
  REQUIRE(x.at(0, 3) == Approx(-1.0));
  REQUIRE(x.at(0, 5) == 0.0f);  // below half a step
  REQUIRE(clipped.size() == 1);  // samples 2-3 are one run
  REQUIRE(clipped[0].onset_s == Approx(0.002));
  REQUIRE(clipped[0].offset_s == Approx(0.004));
  REQUIRE(clipped[0].level_db == Approx(20.0 * std::log10(1.4)).margin(1e-3));
  REQUIRE(quantisation_step(SampleFormat::int24) == std::ldexp(1.0, -23));
  REQUIRE(quantisation_step(SampleFormat::float32) == 0.0);
}

TEST_CASE("filtering in pieces with the carried state equals filtering at once", "[filters]") {
  const double fs = 4000;
  FilterCascade c = chest_wall_filter(30, fs);
  c.append(sensor_response(Sensor::acoustic_bell, fs));  // first- and second-order sections
  std::vector<std::complex<double>> x(600), y(600);
  for (std::size_t i = 0; i < x.size(); ++i)
    x[i] = std::polar(std::exp(-0.01 * i), 2.0 * std::numbers::pi * 70.0 * i / fs);
  std::vector<std::complex<double>> whole = x;
  filter_in_place(c, whole.data(), whole.size());
  // Two pieces, the second continuing from the first's state: the same arithmetic, bit for bit.
  std::vector<std::complex<double>> pieces = x, state(2 * c.sections.size());
  filter_continue(c, pieces.data(), 250, state.data());
  filter_continue(c, pieces.data() + 250, pieces.size() - 250, state.data());
  for (std::size_t i = 0; i < x.size(); ++i) REQUIRE(pieces[i] == whole[i]);
  // Linearity: the input's first 250 samples and its rest filtered apart add up to the whole,
  // the first part's tail being the free response from its state (zero input after it).
  std::vector<std::complex<double>> head(x.size()), rest(x.size()), head_state(2 * c.sections.size());
  std::copy(x.begin(), x.begin() + 250, head.begin());
  std::copy(x.begin() + 250, x.end(), rest.begin() + 250);
  filter_continue(c, head.data(), 250, head_state.data());
  filter_continue(c, head.data() + 250, head.size() - 250, head_state.data());
  filter_in_place(c, rest.data(), rest.size());
  double peak = 0;
  for (const auto& v : whole) peak = std::max(peak, std::abs(v));
  for (std::size_t i = 0; i < x.size(); ++i) REQUIRE(std::abs(head[i] + rest[i] - whole[i]) <= 1e-12 * peak);
}

TEST_CASE("filtering signals together gives each the values it has alone", "[filters]") {
  const double fs = 4000;
  FilterCascade c = chest_wall_filter(15, fs);
  c.append(sensor_response(Sensor::electronic, fs));
  // Three signals of different lengths (a pair in lockstep, then the one left over).
  const std::size_t n[3] = {500, 480, 530};
  std::vector<std::vector<std::complex<double>>> together(3), alone(3), state_together(3), state_alone(3);
  for (std::size_t s = 0; s < 3; ++s) {
    for (std::size_t i = 0; i < n[s]; ++i)
      together[s].push_back(std::polar(std::exp(-0.005 * i), 2.0 * std::numbers::pi * (50.0 + 20.0 * s) * i / fs));
    alone[s] = together[s];
    state_together[s].assign(2 * c.sections.size(), 0.3 * s);  // a non-rest start
    state_alone[s] = state_together[s];
    filter_continue(c, alone[s].data(), n[s], state_alone[s].data());
  }
  std::complex<double>* data[3] = {together[0].data(), together[1].data(), together[2].data()};
  std::complex<double>* state[3] = {state_together[0].data(), state_together[1].data(), state_together[2].data()};
  filter_continue_together(c, data, n, state, 3);
  for (std::size_t s = 0; s < 3; ++s) {
    for (std::size_t i = 0; i < n[s]; ++i) REQUIRE(together[s][i] == alone[s][i]);
    for (std::size_t k = 0; k < state_alone[s].size(); ++k) REQUIRE(state_together[s][k] == state_alone[s][k]);
  }
}

TEST_CASE("first-order sections in their short forms give the general recurrence's values", "[filters]") {
  const double fs = 4000;
  // Low-pass (b1 = b0), high-pass (b1 = -b0) and a general first-order section (b1 unrelated).
  FilterCascade c;
  c.sections = {butter_lowpass1(120, fs), butter_highpass1(25, fs), Biquad{0.3, 0.2, 0.0, -0.6, 0.0}};
  std::vector<std::complex<double>> x(700);
  for (std::size_t i = 0; i < x.size(); ++i)
    x[i] = std::polar(std::exp(-0.004 * i), 2.0 * std::numbers::pi * 60.0 * i / fs);
  // The general recurrence written out (transposed direct form II, as the header states).
  std::vector<std::complex<double>> expected = x;
  for (const Biquad& s : c.sections) {
    std::complex<double> z1 = 0.25, z2 = 0.0;  // a non-rest start
    for (auto& v : expected) {
      const std::complex<double> in = v, y = s.b0 * in + z1;
      z1 = s.b1 * in - s.a1 * y + z2;
      z2 = s.b2 * in - s.a2 * y;
      v = y;
    }
  }
  std::vector<std::complex<double>> y = x, state(2 * c.sections.size(), 0.0);
  for (std::size_t k = 0; k < c.sections.size(); ++k) state[2 * k] = 0.25;
  filter_continue(c, y.data(), y.size(), state.data());
  // The written-out loop adds z2 = 0 where the short forms skip it: the same values.
  for (std::size_t i = 0; i < x.size(); ++i) REQUIRE(y[i] == expected[i]);
}

namespace {

// A decaying complex oscillation, the kind of signal the rendering filters.
std::vector<std::complex<double>> transient(std::size_t n, double frequency_hz, double fs, double decay_per_sample) {
  std::vector<std::complex<double>> x(n);
  for (std::size_t i = 0; i < n; ++i)
    x[i] = std::polar(std::exp(-decay_per_sample * static_cast<double>(i)), 2.0 * std::numbers::pi * frequency_hz * i / fs);
  return x;
}

// The site cascade as plan_transmission builds it (chest wall, sensor).
FilterCascade site_cascade(Sensor sensor, double mm, double fs) {
  FilterCascade c = chest_wall_filter(mm, fs);
  c.append(sensor_response(sensor, fs));
  return c;
}

// The path render_sites takes for the cascade, on one complex signal from rest.
std::vector<std::complex<double>> filter_as_rendered(const FilterCascade& c, std::vector<std::complex<double>> x,
                                                     bool single) {
  std::vector<std::complex<double>> state(2 * c.sections.size());
  std::complex<double>* data[1] = {x.data()};
  std::complex<double>* st[1] = {state.data()};
  const std::size_t n[1] = {x.size()};
  if (single) filter_continue_together_single(c, data, n, st, 1);
  else filter_continue_together(c, data, n, st, 1);
  return x;
}

// Relative RMS difference of the real and imaginary parts of got against scipy.signal.sosfilt of
// the input's real and imaginary parts.
double relative_rms_to_sosfilt(const FilterCascade& c, const std::vector<std::complex<double>>& x,
                               const std::vector<std::complex<double>>& got) {
  std::vector<double> re, im;
  for (const auto& v : x) re.push_back(v.real()), im.push_back(v.imag());
  const std::string sos = test::write_cascade("sosfilt_sos", c), fre = test::write_samples("sosfilt_re", re),
                    fim = test::write_samples("sosfilt_im", im);
  std::vector<double> ref = test::run_reference("sosfilt " + sos + " " + fre + " " + fim);
  for (const std::string& p : {sos, fre, fim}) std::remove(p.c_str());
  REQUIRE(ref.size() == 2 * x.size());
  double err = 0, power = 0;
  for (std::size_t i = 0; i < x.size(); ++i) {
    const std::complex<double> r(ref[i], ref[x.size() + i]);
    err += std::norm(got[i] - r);
    power += std::norm(r);
  }
  return std::sqrt(err / power);
}

}  // namespace

TEST_CASE("single-precision gate from the poles: acoustic and electronic sensors yes, accelerometer at 4 kHz no",
          "[filters]") {
  for (Sensor s : {Sensor::acoustic_bell, Sensor::acoustic_diaphragm, Sensor::electronic})
    for (double fs : {1000.0, 4000.0, 8000.0}) {
      INFO(name(s) << " at " << fs << " Hz");
      REQUIRE(single_precision_suffices(site_cascade(s, 22, fs)));
    }
  // The accelerometer's 10 Hz second-order high-pass: at 4 kHz its poles lie 0.011 from the unit
  // circle and 0.022 apart, so float's rounding of a1 ~ -1.98 moves them by ~3e-6.
  for (double fs : {4000.0, 8000.0, 48000.0}) {
    INFO("accelerometer at " << fs << " Hz");
    REQUIRE_FALSE(single_precision_suffices(site_cascade(Sensor::accelerometer, 22, fs)));
  }
  // The 20 Hz first-order high-pass at 48 kHz, worked by hand: pole p = (1 - k) / (1 + k) with
  // k = tan(pi 20 / 48000), 1 - p = 2.6e-3; rounding p to float moves it by at most half a float
  // ulp below 1 (2^-25), so the bound lies between 2^-24 / (1 - p) and (2^-24 + 2^-25) / (1 - p).
  FilterCascade high;
  high.sections = {butter_highpass1(20, 48000)};
  const double k = std::tan(std::numbers::pi * 20.0 / 48000.0), margin = 1.0 - (1.0 - k) / (1.0 + k);
  REQUIRE(single_precision_error_bound(high) >= 0x1p-24 / margin * (1 - 1e-9));
  REQUIRE(single_precision_error_bound(high) <= (0x1p-24 + 0x1p-25) / margin * (1 + 1e-9));
}

TEST_CASE("both rendering filter paths match scipy.signal.sosfilt", "[filters]") {
  struct Case { Sensor sensor; double fs; };
  for (Case k : {Case{Sensor::electronic, 4000}, Case{Sensor::acoustic_bell, 4000}, Case{Sensor::acoustic_diaphragm, 8000},
                 Case{Sensor::accelerometer, 4000}, Case{Sensor::accelerometer, 48000}}) {
    const FilterCascade c = site_cascade(k.sensor, 22, k.fs);
    const bool single = single_precision_suffices(c);
    const auto x = transient(3000, 90.0, k.fs, 2e-3 * 4000 / k.fs);
    const double rel = relative_rms_to_sosfilt(c, x, filter_as_rendered(c, x, single));
    INFO(name(k.sensor) << " at " << k.fs << " Hz, single precision " << single << ": relative RMS " << rel);
    // scipy.signal.sosfilt in double: the single path within the gate's tolerance (biquad.hpp),
    // the double path to rounding.
    REQUIRE(rel <= (single ? kSinglePrecisionTolerance : 1e-12));
  }
  // The gate is needed: at 48 kHz the accelerometer in single precision is off by more than the
  // tolerance (measured with the same reference).
  const FilterCascade accel = site_cascade(Sensor::accelerometer, 22, 48000);
  const auto x = transient(48000, 12.0, 48000, 1e-4);
  REQUIRE(relative_rms_to_sosfilt(accel, x, filter_as_rendered(accel, x, true)) > kSinglePrecisionTolerance);
}

TEST_CASE("single-precision response matches scipy.signal.sosfreqz", "[filters]") {
  const double fs = 4000;
  const std::vector<double> freqs = {20.0, 40.0, 66.0, 100.0, 150.0, 300.0, 600.0, 1200.0};
  std::string list;
  for (double f : freqs) list += (list.empty() ? "" : ",") + std::to_string(f);
  for (Sensor s : {Sensor::acoustic_bell, Sensor::electronic}) {
    const FilterCascade c = site_cascade(s, 22, fs);
    REQUIRE(single_precision_suffices(c));
    const std::string path = test::write_cascade("single_freqz", c);
    std::vector<double> ref = test::run_reference("freqz " + std::to_string(fs) + " " + list + " " + path);
    std::remove(path.c_str());
    REQUIRE(ref.size() == freqs.size());
    std::vector<std::complex<double>> h(static_cast<std::size_t>(60.0 * c.slowest_time_constant_s(fs) * fs) + 64);
    h[0] = 1.0;
    h = filter_as_rendered(c, h, true);
    for (std::size_t j = 0; j < freqs.size(); ++j) {
      std::complex<double> acc{};
      for (std::size_t i = 0; i < h.size(); ++i) acc += h[i] * std::polar(1.0, -2.0 * std::numbers::pi * freqs[j] * i / fs);
      INFO(name(s) << " at " << freqs[j] << " Hz");
      // scipy.signal.sosfreqz of the double coefficients; 1e-3 dB is a relative error of 1.2e-4.
      REQUIRE(db(acc) == Approx(ref[j]).margin(1e-3));
    }
  }
}

TEST_CASE("single-precision filtering gives each signal the values it has alone", "[filters]") {
  const double fs = 4000;
  const FilterCascade c = site_cascade(Sensor::acoustic_bell, 15, fs);  // first- and second-order sections
  REQUIRE(single_precision_suffices(c));
  // Five signals of different lengths: four in lockstep, then one alone; and three: a pair, then one.
  for (std::size_t count : {5u, 3u}) {
    const std::size_t lengths[5] = {500, 480, 530, 510, 470};
    std::vector<std::vector<std::complex<double>>> together(count), alone(count), st_together(count), st_alone(count);
    std::vector<std::complex<double>*> data(count), state(count);
    for (std::size_t s = 0; s < count; ++s) {
      together[s] = alone[s] = transient(lengths[s], 50.0 + 20.0 * s, fs, 5e-3);
      st_together[s].assign(2 * c.sections.size(), 0.3 * s);  // a non-rest start
      st_alone[s] = st_together[s];
      std::complex<double>* d[1] = {alone[s].data()};
      std::complex<double>* st[1] = {st_alone[s].data()};
      filter_continue_together_single(c, d, &lengths[s], st, 1);
      data[s] = together[s].data(), state[s] = st_together[s].data();
    }
    filter_continue_together_single(c, data.data(), lengths, state.data(), count);
    for (std::size_t s = 0; s < count; ++s) {
      INFO(count << " signals, signal " << s);
      for (std::size_t i = 0; i < lengths[s]; ++i) REQUIRE(together[s][i] == alone[s][i]);
      for (std::size_t k = 0; k < st_alone[s].size(); ++k) REQUIRE(st_together[s][k] == st_alone[s][k]);
    }
  }
}

TEST_CASE("output stage at unit gain in float32: samples within full scale unchanged, beyond it clipped", "[filters]") {
  SiteArray<float> x(2, 5);
  const float in[2][5] = {{0.1f, -0.99999994f, 0.999999f, 1e-30f, -0.0f}, {0.5f, 1.25f, -0.25f, -1.5f, 0.75f}};
  for (std::size_t s = 0; s < 2; ++s) std::copy(in[s], in[s] + 5, x.row(s));
  auto clipped = apply_output_stage(x, 0.0, SampleFormat::float32, 1000);
  // Site 0 stays within [-1, 1]: float32 at 0 dB keeps every sample bit for bit.
  for (std::size_t i = 0; i < 5; ++i) REQUIRE(std::memcmp(&x.row(0)[i], &in[0][i], sizeof(float)) == 0);
  // Site 1 clips at full scale 1.0 (float32 has no quantisation step) and reports two runs.
  const float expected[5] = {0.5f, 1.0f, -0.25f, -1.0f, 0.75f};
  for (std::size_t i = 0; i < 5; ++i) REQUIRE(x.at(1, i) == expected[i]);
  REQUIRE(clipped.size() == 2);
  REQUIRE(clipped[0].site == 1);
  REQUIRE(clipped[0].level_db == Approx(20.0 * std::log10(1.25)));
  REQUIRE(clipped[1].level_db == Approx(20.0 * std::log10(1.5)));
}
