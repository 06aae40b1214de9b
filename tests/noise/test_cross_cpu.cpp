// The noise processes give the same samples whichever libm variants and FFT codelets the CPU
// selects (DESIGN.md "Determinism").
#include <catch2/catch.hpp>

#include <cmath>
#include <cstring>

#include <fftw3.h>

#include "cross_cpu_check.hpp"
#include "noise/spectral.hpp"
#include "noise_helpers.hpp"

using namespace stethogen;
using noise_test::make_case;

namespace {

// A clean record from arithmetic alone (no libm: parent and child must get the same input):
// 37 Hz triangle bursts at every site.
void fill_clean(noise_test::Case& c) {
  for (std::size_t s = 0; s < c.clean.n_sites; ++s)
    for (std::size_t i = 0; i < c.clean.n_samples; ++i) {
      const double t = static_cast<double>(i) / c.rate_hz;
      const double cycle = 37.0 * t - std::floor(37.0 * t);
      const double gate = t - 0.8 * std::floor(t / 0.8) < 0.1 ? 1.0 : 0.05;
      c.clean.at(s, i) = static_cast<float>(0.1 * (1 + 0.1 * s) * gate * (4.0 * std::fabs(cycle - 0.5) - 1.0));
    }
}

void add_output(cross_cpu::Digest& d, const noise::NoiseOutput& out) {
  d.values(out.noisy.data);
  d.value(out.snr_achieved_db);
  for (const Artifact& a : out.artifacts) d.value(a.site), d.value(a.onset_s), d.value(a.offset_s), d.value(a.level_db);
}

// Every noise process alone (ambient in each colour), then all together, on a fixed 4-site
// record, with several seeds: libm's variants differ in under 0.1 % of results.
std::string noise_stages_digest() {
  cross_cpu::Digest d;
  std::vector<noise::NoiseProfile> profiles;
  noise::NoiseProfile all;
  auto with = [&](auto enable) {
    noise::NoiseProfile p;
    enable(p);
    enable(all);
    profiles.push_back(p);
  };
  with([](noise::NoiseProfile& p) { p.sensor_white.enabled = true; });
  for (noise::NoiseColor color : {noise::NoiseColor::white, noise::NoiseColor::pink, noise::NoiseColor::brown,
                                  noise::NoiseColor::band})
    with([color](noise::NoiseProfile& p) { p.ambient.enabled = true, p.ambient.color = color; });
  with([](noise::NoiseProfile& p) { p.breath.enabled = true; });
  with([](noise::NoiseProfile& p) { p.friction.enabled = true, p.friction.rate_per_min = 30; });
  with([](noise::NoiseProfile& p) { p.motion.enabled = true; });
  with([](noise::NoiseProfile& p) { p.hum.enabled = true; });
  with([](noise::NoiseProfile& p) { p.dropout.enabled = true; });
  profiles.push_back(all);
  const auto resp_phase = [](double t) { return t / 4.0 - std::floor(t / 4.0); };
  for (std::uint64_t seed = 1; seed <= 4; ++seed)
    for (const noise::NoiseProfile& p : profiles) {
      noise_test::Case c = make_case(p, 12.0, 6.0, 4, 4000, seed);
      fill_clean(c);
      add_output(d, c.run(resp_phase));
    }
  return d.hex();
}

}  // namespace

TEST_CASE("cross-CPU child: noise stages digest", "[.cross_cpu]") { cross_cpu::print_digest(noise_stages_digest()); }

TEST_CASE("noise processes are the same with libm's FMA and AVX2 variants masked", "[determinism]") {
  cross_cpu::require_same_when_masked(noise_stages_digest(), "cross-CPU child: noise stages digest");
}

// The glibc tunable does not reach FFTW's own CPU detection, so the scalar codelets are checked
// directly: the spectral synthesis equals the same spectrum run through a plan made with
// FFTW_NO_SIMD (FFTW 3 manual, "Planner Flags"), bit for bit.
TEST_CASE("spectral synthesis uses FFTW's scalar codelets (FFTW_NO_SIMD)") {
  for (std::size_t n : {4001, 4096, 24000, 120000}) {
    INFO("n = " << n);
    const auto response = noise::amplitude_response(n, 4000.0, [](double f) { return 1.0 / std::sqrt(f); });
    RandomStream a(5, 1, stream_id(Stream::noise_base, 2)), b(5, 1, stream_id(Stream::noise_base, 2));
    const noise::ShapedNoise made = noise::shaped_gaussian(a, response, n);

    const std::size_t bins = n / 2 + 1;
    float* spectrum = reinterpret_cast<float*>(fftwf_alloc_complex(bins));
    float* expected = fftwf_alloc_real(n);
    noise::fill_gaussian(b, spectrum, 2 * bins);
    spectrum[0] = spectrum[1] = 0;
    if (n % 2 == 0) spectrum[2 * bins - 1] = 0;
    for (std::size_t k = 1; k < bins; ++k) spectrum[2 * k] *= response[k], spectrum[2 * k + 1] *= response[k];
    fftwf_plan plan = fftwf_plan_dft_c2r_1d(static_cast<int>(n), reinterpret_cast<fftwf_complex*>(spectrum), expected,
                                            FFTW_ESTIMATE | FFTW_DESTROY_INPUT | FFTW_NO_SIMD);
    fftwf_execute(plan);
    CHECK(std::memcmp(made.samples.get(), expected, n * sizeof(float)) == 0);
    fftwf_destroy_plan(plan);
    fftwf_free(expected);
    fftwf_free(spectrum);
  }
}
