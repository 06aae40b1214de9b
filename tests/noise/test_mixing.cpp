// Mixing: exact SNR, bit-identical clean copy without noise, determinism, independent streams,
// the artifact table, dropouts and clipping motion.
#include <catch2/catch.hpp>

#include <ctime>
#include <cmath>
#include <cstring>
#include <iostream>
#include <thread>

#include <fmt/format.h>

#include "noise_helpers.hpp"

using namespace stethogen;
using namespace noise_test;

namespace {

noise::NoiseProfile busy_profile() {
  noise::NoiseProfile p;
  p.sensor_white.enabled = true;
  p.ambient.enabled = true;
  p.breath.enabled = true;
  p.friction.enabled = true;
  p.friction.rate_per_min = 6;
  p.motion.enabled = true;
  p.motion.rate_per_min = 3;
  p.hum.enabled = true;
  return p;
}

double correlation(const std::vector<float>& a, const std::vector<float>& b) {
  double ab = 0, aa = 0, bb = 0;
  for (std::size_t i = 0; i < a.size(); ++i) {
    ab += static_cast<double>(a[i]) * b[i];
    aa += static_cast<double>(a[i]) * a[i];
    bb += static_cast<double>(b[i]) * b[i];
  }
  return ab / std::sqrt(aa * bb);
}

bool same_bits(const SiteArray<float>& a, const SiteArray<float>& b) {
  return a.data.size() == b.data.size() && std::memcmp(a.data.data(), b.data.data(), a.data.size() * 4) == 0;
}

double power(const std::vector<float>& x, std::size_t from, std::size_t to) {
  double sum = 0;
  for (std::size_t i = from; i < to; ++i) sum += static_cast<double>(x[i]) * x[i];
  return sum / static_cast<double>(to - from);
}

}  // namespace

TEST_CASE("without a profile or an SNR the noisy signal is a bit-identical copy of the clean one") {
  Case c = make_case(busy_profile(), 10, 2, 4);
  c.subject.params.snr_db.reset();
  auto out = c.run();
  CHECK(same_bits(out.noisy, c.clean));
  CHECK(std::isnan(out.snr_target_db));
  CHECK(std::isnan(out.snr_achieved_db));
  CHECK(out.artifacts.empty());
  c.subject.params.snr_db = 10;
  c.subject.noise_profile.reset();
  out = c.run();
  CHECK(same_bits(out.noisy, c.clean));
  CHECK(std::isnan(out.snr_achieved_db));
}

TEST_CASE("the achieved SNR matches the target over -10 to 40 dB") {
  std::vector<float> clean_all, noisy_all;
  std::vector<double> targets;
  for (double snr_db = -10; snr_db <= 40; snr_db += 5) targets.push_back(snr_db);
  for (std::size_t k = 0; k < targets.size(); ++k) {
    Case c = make_case(busy_profile(), targets[k], 10, 4, 4000, 100 + k);
    auto out = c.run();
    CHECK(out.snr_target_db == targets[k]);
    CHECK(out.snr_achieved_db == Approx(targets[k]).margin(0.2));
    clean_all.insert(clean_all.end(), c.clean.data.begin(), c.clean.data.end());
    noisy_all.insert(noisy_all.end(), out.noisy.data.begin(), out.noisy.data.end());
  }
  TempDir dir;
  write_f32(dir.file("clean.f32"), clean_all);
  write_f32(dir.file("noisy.f32"), noisy_all);
  auto m = reference(fmt::format("snr {} {} {}", dir.file("clean.f32"), dir.file("noisy.f32"), targets.size()));
  for (std::size_t k = 0; k < targets.size(); ++k) {
    INFO("target " << targets[k] << " dB");
    // numpy: 10 log10(sum clean^2 / sum (noisy - clean)^2) over all sites, full band; the
    // issue's tolerance of 0.2 dB.
    CHECK(m[fmt::format("snr_{}_db", k)] == Approx(targets[k]).margin(0.2));
    // The same numpy measure: the scale is exact, only the rounding of the float samples
    // remains, far below 1e-7 dB.
    CHECK(m[fmt::format("snr_{}_db", k)] == Approx(targets[k]).margin(1e-7));
  }
}

TEST_CASE("the same seed gives bit-identical noise, another seed uncorrelated noise") {
  Case a = make_case(busy_profile(), 0, 20, 2, 4000, 11);
  Case b = make_case(busy_profile(), 0, 20, 2, 4000, 11);
  Case other = make_case(busy_profile(), 0, 20, 2, 4000, 12);
  auto out_a = a.run(), out_b = b.run(), out_other = other.run();
  CHECK(same_bits(out_a.noisy, out_b.noisy));
  REQUIRE(out_a.artifacts.size() == out_b.artifacts.size());
  for (std::size_t i = 0; i < out_a.artifacts.size(); ++i) CHECK(out_a.artifacts[i].onset_s == out_b.artifacts[i].onset_s);
  for (std::size_t s = 0; s < 2; ++s) {
    double r = correlation(noise_at(out_a, a.clean, s), noise_at(out_other, other.clean, s));
    // The sample correlation of independent series has SD 1/sqrt(N) (common practice); the
    // hum and breath make the noise far from white, so allow 0.1.
    CHECK(std::abs(r) < 0.1);
  }
}

TEST_CASE("noise made on several threads at once is bit-identical to noise made alone") {
  // Record lengths no other test uses, so that the threads also fill the FFT plan and
  // spectrum caches concurrently.
  noise::NoiseProfile p = busy_profile();
  p.dropout.enabled = true;
  std::vector<Case> cases;
  for (std::size_t k = 0; k < 4; ++k) cases.push_back(make_case(p, 5 + 5 * k, k % 2 ? 3.3 : 4.7, 4, 4000, 40 + k));
  auto phase = [](double t) { return std::fmod(t / 3.0, 1.0); };
  std::vector<noise::NoiseOutput> threaded(cases.size());
  std::vector<std::thread> workers;
  for (std::size_t k = 0; k < cases.size(); ++k)
    workers.emplace_back([&, k] { threaded[k] = cases[k].run(phase); });
  for (std::thread& w : workers) w.join();
  for (std::size_t k = 0; k < cases.size(); ++k) {
    INFO("case " << k);
    auto alone = cases[k].run(phase);
    CHECK(same_bits(threaded[k].noisy, alone.noisy));
    CHECK(threaded[k].snr_achieved_db == alone.snr_achieved_db);
    CHECK(threaded[k].artifacts.size() == alone.artifacts.size());
  }
}

TEST_CASE("adding a process leaves the others' draws unchanged; sites share room noise, not sensor noise") {
  noise::NoiseProfile friction_only;
  friction_only.friction.enabled = true;
  friction_only.friction.rate_per_min = 20;
  noise::NoiseProfile more = friction_only;
  more.ambient.enabled = true;
  more.hum.enabled = true;
  auto a = make_case(friction_only, 10, 30, 2).run();
  auto b = make_case(more, 10, 30, 2).run();
  REQUIRE(a.artifacts.size() == b.artifacts.size());
  for (std::size_t i = 0; i < a.artifacts.size(); ++i) {
    CHECK(a.artifacts[i].onset_s == b.artifacts[i].onset_s);
    CHECK(a.artifacts[i].offset_s == b.artifacts[i].offset_s);
  }
  CHECK(b.stationary == std::vector<std::string>{"ambient_pink", "hum_50hz"});

  noise::NoiseProfile room;
  room.ambient.enabled = true;
  Case c = make_case(room, 0, 20, 2);
  auto out = c.run();
  // Shared power fraction site_coherence = 0.9 gives a correlation near 0.9 (definition).
  CHECK(correlation(noise_at(out, c.clean, 0), noise_at(out, c.clean, 1)) == Approx(0.9).margin(0.03));
  // No shared part: the local fields of two sites are uncorrelated (SD 1/sqrt(N) for white
  // noise, common practice; pink noise is correlated over longer spans, so allow 0.05).
  room.ambient.site_coherence = 0;
  Case local = make_case(room, 0, 20, 4);
  auto out_local = local.run();
  for (std::size_t s = 1; s < 4; ++s)
    CHECK(std::abs(correlation(noise_at(out_local, local.clean, 0), noise_at(out_local, local.clean, s))) < 0.05);
  noise::NoiseProfile hum;
  hum.hum.enabled = true;
  Case h = make_case(hum, 0, 10, 2);
  auto out_h = h.run();
  // One mains supply: the same waveform at every site with per-site phase offsets within
  // +-0.1 rad (h x that at harmonic h). Worst case for 4 harmonics 6 dB apart:
  // sum P_h cos(0.2 h) / sum P_h = 0.958.
  CHECK(correlation(noise_at(out_h, h.clean, 0), noise_at(out_h, h.clean, 1)) > 0.95);
  noise::NoiseProfile sensor;
  sensor.sensor_white.enabled = true;
  Case d = make_case(sensor, 0, 20, 2);
  auto out_d = d.run();
  CHECK(std::abs(correlation(noise_at(out_d, d.clean, 0), noise_at(out_d, d.clean, 1))) < 0.02);
}

TEST_CASE("friction bursts are listed with Poisson counts, their durations and measured levels") {
  noise::NoiseProfile p;
  p.friction.enabled = true;
  p.friction.rate_per_min = 30;
  Case c = make_case(p, 5, 60, 2);
  auto out = c.run();
  // Poisson count: mean rate x time = 2 sites x 30 events; 4 standard deviations (common practice).
  CHECK(out.artifacts.size() >= 60 - 4 * std::sqrt(60.0));
  CHECK(out.artifacts.size() <= 60 + 4 * std::sqrt(60.0));
  for (const auto& a : out.artifacts) {
    CHECK(a.kind == "friction");
    CHECK(a.offset_s - a.onset_s >= 0.030 - 1.0 / c.rate_hz);
    CHECK(a.offset_s - a.onset_s <= 0.200 + 1.0 / c.rate_hz);
    auto x = noise_at(out, c.clean, a.site);
    std::size_t on = std::lround(a.onset_s * c.rate_hz), off = std::lround(a.offset_s * c.rate_hz);
    std::vector<float> clean_row(c.clean.row(a.site), c.clean.row(a.site) + c.clean.n_samples);
    double measured = 10 * std::log10(power(x, on, off) / power(clean_row, 0, clean_row.size()));
    CHECK(a.level_db == Approx(measured).margin(0.05));
  }
}

TEST_CASE("dropouts pull signal and room noise to the depth and leave the sensor floor") {
  noise::NoiseProfile base;
  base.ambient.enabled = true;
  noise::NoiseProfile with_dropout = base;
  with_dropout.dropout.enabled = true;
  with_dropout.dropout.rate_per_min = 20;
  with_dropout.dropout.duration_ms = {100, 300};
  Case plain = make_case(base, 0, 30, 2), dropped = make_case(with_dropout, 0, 30, 2);
  auto a = plain.run(), b = dropped.run();
  CHECK(b.snr_achieved_db == Approx(0).margin(0.01));  // the SNR is defined before dropouts
  std::size_t checked = 0;
  for (const auto& art : b.artifacts) {
    REQUIRE(art.kind == "dropout");
    CHECK(art.level_db == -40);
    std::size_t mid = std::lround(0.5 * (art.onset_s + art.offset_s) * plain.rate_hz);
    float expect = 0.01f * a.noisy.at(art.site, mid);
    CHECK(b.noisy.at(art.site, mid) == Approx(expect).margin(1e-6));
    ++checked;
  }
  CHECK(checked > 5);

  noise::NoiseProfile sensor;
  sensor.sensor_white.enabled = true;
  noise::NoiseProfile sensor_dropout = sensor;
  sensor_dropout.dropout = with_dropout.dropout;
  Case s_plain = make_case(sensor, 0, 30, 1), s_drop = make_case(sensor_dropout, 0, 30, 1);
  auto sa = s_plain.run(), sb = s_drop.run();
  for (const auto& art : sb.artifacts) {
    std::size_t mid = std::lround(0.5 * (art.onset_s + art.offset_s) * s_plain.rate_hz);
    float clean = s_plain.clean.at(0, mid);
    CHECK(sb.noisy.at(0, mid) == Approx(sa.noisy.at(0, mid) - 0.99f * clean).margin(1e-6));
  }
}

TEST_CASE("clipping motion reaches beyond full scale and is listed") {
  noise::NoiseProfile p;
  p.sensor_white.enabled = true;
  p.motion.enabled = true;
  p.motion.clip = true;
  p.motion.rate_per_min = 10;
  Case c = make_case(p, 20, 30, 1);
  auto out = c.run();
  CHECK(out.snr_achieved_db == Approx(20).margin(0.01));
  REQUIRE_FALSE(out.artifacts.empty());
  for (const auto& a : out.artifacts) {
    CHECK(a.kind == "motion");
    float peak = 0;
    for (long i = std::lround(a.onset_s * c.rate_hz); i < std::lround(a.offset_s * c.rate_hz); ++i)
      peak = std::max(peak, std::abs(out.noisy.at(0, i)));
    CHECK(peak > 1.0f);  // the sensor's full scale
  }
}

TEST_CASE("benchmark: noise for a 30 s, 4-site, 4 kHz record", "[.benchmark]") {
  auto p = busy_profile();
  p.dropout.enabled = true;
  Case c = make_case(p, 10, 30, 4);
  auto phase = [](double t) { return std::fmod(t / 4.0, 1.0); };
  c.run(phase);
  // CPU time of this process: the machine is shared, so wall time says little.
  auto cpu_ms = [] { return 1000.0 * static_cast<double>(std::clock()) / CLOCKS_PER_SEC; };
  constexpr int kRuns = 20;
  double start = cpu_ms();
  for (int i = 0; i < kRuns; ++i) c.run(phase);
  double ms = (cpu_ms() - start) / kRuns;
  std::cout << fmt::format("add_noise, 30 s x 4 sites x 4 kHz, all processes: {:.2f} ms CPU per record\n", ms);
  for (const char* only : {"sensor_white", "ambient", "breath", "hum", "friction+motion+dropout"}) {
    noise::NoiseProfile q;
    std::string name = only;
    q.sensor_white.enabled = name == "sensor_white";
    q.ambient.enabled = name == "ambient";
    q.breath.enabled = name == "breath";
    q.hum.enabled = name == "hum";
    q.friction.enabled = q.motion.enabled = q.dropout.enabled = name == "friction+motion+dropout";
    Case d = make_case(q, 10, 30, 4);
    double t0 = cpu_ms();
    for (int i = 0; i < kRuns; ++i) d.run(phase);
    double each = (cpu_ms() - t0) / kRuns;
    std::cout << fmt::format("  {} only: {:.2f} ms\n", name, each);
  }
}
