// Spectral shape of the noise processes, measured by scipy.signal.welch on the generated noise.
#include <catch2/catch.hpp>

#include <cstring>

#include <fmt/format.h>

#include "noise/gaussian.hpp"
#include "noise_helpers.hpp"

using namespace stethogen;
using namespace noise_test;

namespace {

constexpr double kSlopeToleranceDbPerOctave = 1.0;  // the acceptance band

std::map<std::string, double> measure(const noise::NoiseProfile& profile, const std::string& check,
                                      const std::string& args, double duration_s = 60,
                                      std::function<double(double)> phase = {}) {
  Case c = make_case(profile, -20, duration_s);
  auto out = c.run(std::move(phase));
  TempDir dir;
  write_f32(dir.file("noise.f32"), noise_at(out, c.clean, 0));
  return reference(check + " " + dir.file("noise.f32") + " " + std::to_string(c.rate_hz) + " " + args);
}

noise::NoiseProfile ambient(noise::NoiseColor color) {
  noise::NoiseProfile p;
  p.ambient.enabled = true;
  p.ambient.color = color;
  return p;
}

}  // namespace

TEST_CASE("the Gaussian generator passes a Kolmogorov-Smirnov test against the standard normal") {
  RandomStream rng(5, 1, stream_id(Stream::noise_base));
  std::vector<float> x(400000);
  noise::fill_gaussian(rng, x.data(), x.size());
  TempDir dir;
  write_f32(dir.file("normal.f32"), x);
  auto m = reference("normal " + dir.file("normal.f32"));
  // scipy.stats.kstest against the standard normal: no rejection at the 0.1 % level.
  CHECK(m["ks_pvalue"] > 0.001);
  // Moments of N(0, 1): mean 0, variance 1, excess kurtosis 0 (standard errors ~0.0016,
  // 0.0022 and 0.0077 at this sample size).
  CHECK(m["mean"] == Approx(0).margin(0.008));
  CHECK(m["variance"] == Approx(1).margin(0.011));
  CHECK(m["excess_kurtosis"] == Approx(0).margin(0.04));
  // P(|Z| > 4) = 6.33e-5 (normal table): the tail path works.
  CHECK(m["tail_fraction_beyond_4sd"] == Approx(6.33e-5).margin(3e-5));
}

TEST_CASE("the AVX2 and the portable Gaussian paths give bit-identical values") {
  // The output must not depend on the machine: the AVX2 kernel (SplitMix64 words) has to
  // reproduce the portable loop exactly, at every block boundary and remainder length.
  if (!noise::gaussian_uses_avx2()) WARN("this processor has no AVX2: both runs take the portable path");
  for (std::size_t n : {1, 2, 3, 7, 8, 9, 511, 512, 513, 1025, 120003}) {
    INFO("n = " << n);
    std::vector<float> fast(n), portable(n);
    RandomStream a(9, 2, stream_id(Stream::noise_base, 3)), b(9, 2, stream_id(Stream::noise_base, 3));
    noise::fill_gaussian(a, fast.data(), n, noise::GaussianPath::fastest);
    noise::fill_gaussian(b, portable.data(), n, noise::GaussianPath::portable);
    CHECK(std::memcmp(fast.data(), portable.data(), n * sizeof(float)) == 0);
    CHECK(a.next_u64() == b.next_u64());  // one seed word taken from the stream either way
  }
}

TEST_CASE("white, pink and brown noise have the slopes of their definitions") {
  noise::NoiseProfile white;
  white.sensor_white.enabled = true;
  // Definitions (common practice): white = flat, pink = power 1/f = -3.01 dB/octave,
  // brown = power 1/f^2 = -6.02 dB/octave; measured with scipy.signal.welch.
  CHECK(measure(white, "slope", "20 1900")["slope_db_per_octave"] == Approx(0).margin(kSlopeToleranceDbPerOctave));
  CHECK(measure(ambient(noise::NoiseColor::white), "slope", "20 1900")["slope_db_per_octave"] ==
        Approx(0).margin(kSlopeToleranceDbPerOctave));
  CHECK(measure(ambient(noise::NoiseColor::pink), "slope", "20 1900")["slope_db_per_octave"] ==
        Approx(-3.01).margin(kSlopeToleranceDbPerOctave));
  CHECK(measure(ambient(noise::NoiseColor::brown), "slope", "20 1900")["slope_db_per_octave"] ==
        Approx(-6.02).margin(kSlopeToleranceDbPerOctave));
  // Flat below low_corner_hz (the profile's definition): a second brown profile in the same
  // process must get its own spectrum, not the one cached for the first.
  auto brown_high_corner = ambient(noise::NoiseColor::brown);
  brown_high_corner.ambient.low_corner_hz = 400;
  CHECK(measure(brown_high_corner, "slope", "20 300")["slope_db_per_octave"] ==
        Approx(0).margin(kSlopeToleranceDbPerOctave));
}

TEST_CASE("band-limited room noise stays inside its band") {
  auto p = ambient(noise::NoiseColor::band);
  p.ambient.band_hz = {150, 450};
  // scipy.signal.welch: power outside the band at least 40 dB below the in-band density.
  CHECK(measure(p, "band", "150 450")["outside_vs_inside_db"] < -40);
}

TEST_CASE("breath sounds follow Gavriely et al. 1995: corner, slope, upper limit, inspiration louder") {
  noise::NoiseProfile p;
  p.breath.enabled = true;
  const double period_s = 4.0, insp_fraction = 0.4;
  auto phase = [&](double t) { return std::fmod(t / period_s, 1.0); };
  auto m = measure(p, "breath",
                   fmt::format("{} {} {} {}", period_s, insp_fraction, p.breath.corner_hz, p.breath.upper_hz), 120,
                   phase);
  // Gavriely, Nissan, Rubin & Cugell 1995 (Thorax 50:1292): inspiratory power falls -13 to
  // -15 dB/octave above the corner; measured with scipy.signal.welch.
  CHECK(m["insp_slope_db_per_octave"] <= -13.0);
  CHECK(m["insp_slope_db_per_octave"] >= -15.0);
  // Same source: upper frequency limit near 700-1000 Hz (here the -30 dB point of the
  // inspiratory spectrum relative to its low-frequency plateau: our operational reading).
  CHECK(m["upper_limit_30db_hz"] >= 700);
  CHECK(m["upper_limit_30db_hz"] <= 1000);
  // Same source: inspiration louder than expiration.
  CHECK(m["insp_vs_exp_db"] > 3);
}

TEST_CASE("powerline hum peaks at the mains frequency and its harmonics") {
  for (double mains_hz : {50.0, 60.0}) {
    noise::NoiseProfile p;
    p.hum.enabled = true;
    p.hum.frequency_hz = mains_hz;
    p.hum.harmonics = 3;
    auto m = measure(p, "peaks", fmt::format("{} {}", mains_hz, p.hum.harmonics + 1), 60);
    for (int k = 1; k <= p.hum.harmonics + 1; ++k) {
      INFO("mains " << mains_hz << " Hz, harmonic " << k);
      // Mains frequency 50 or 60 Hz and integer harmonics (common practice); peak located by
      // scipy.signal.welch at 0.0625 Hz resolution, within the 0.5 Hz.
      CHECK(m[fmt::format("peak_{}_hz", k)] == Approx(k * mains_hz).margin(0.5));
      CHECK(m[fmt::format("peak_{}_vs_between_db", k)] > 30);
    }
  }
}
