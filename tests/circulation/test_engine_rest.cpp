// The healthy resting subject against published values (CHECK_VALUES.md), the systolic time
// intervals of Weissler et al. 1968, and the respiratory effects.
#include <catch2/catch.hpp>

#include "core/error.hpp"
#include "engine_helpers.hpp"
#include "generator/circulation/model.hpp"

using namespace stethogen;
using namespace stethogen::gen;
using namespace stethogen::gen::test;

TEST_CASE("resting hemodynamics fall in the published ranges", "[circulation]") {
  const CirculationResult r = simulate_circulation(subject(State::rest, 0.0, 10.0));
  REQUIRE(r.beats.size() >= 10);
  const auto mean = [&](auto f) { return beat_mean(r, f); };
  // Standard catheterisation reference table (Grossman's, from memory): aortic 90-140 / 60-90 mmHg.
  CHECK(mean([](auto& b) { return b.aortic_systolic_mmhg; }) == Approx(115).margin(25));
  CHECK(mean([](auto& b) { return b.aortic_diastolic_mmhg; }) == Approx(75).margin(15));
  // Same table: LV end-diastolic 4-12 mmHg; RV 15-30 / 0-8 mmHg.
  CHECK(mean([](auto& b) { return b.lv_edp_mmhg; }) == Approx(8).margin(4));
  CHECK(mean([](auto& b) { return b.rv_systolic_mmhg; }) == Approx(22.5).margin(7.5));
  CHECK(mean([](auto& b) { return b.rv_edp_mmhg; }) == Approx(4).margin(4));
  // Same table: PA 15-30 / 4-12 mmHg; Kovacs et al. 2009 (Eur Respir J 34:888): mean 14 +- 3.3, < 20.
  CHECK(mean([](auto& b) { return b.pa_systolic_mmhg; }) == Approx(22.5).margin(7.5));
  CHECK(mean([](auto& b) { return b.pa_diastolic_mmhg; }) == Approx(8).margin(4));
  CHECK(mean([](auto& b) { return b.pa_mean_mmhg; }) == Approx(14).margin(2 * 3.3));
  CHECK(mean([](auto& b) { return b.pa_mean_mmhg; }) < 20);
  // Same table: LA (wedge) mean 4-12, RA mean 2-6 mmHg.
  CHECK(mean([](auto& b) { return b.la_mean_mmhg; }) == Approx(8).margin(4));
  CHECK(mean([](auto& b) { return b.ra_mean_mmhg; }) == Approx(4).margin(2));
  // Hudsmith et al. 2005 (J Cardiovasc Magn Reson 7:775): EDV 160+-29 men, 135+-26 women; ESV
  // 50+-16 / 42+-12 mL. Within 2 SD of either sex.
  CHECK(mean([](auto& b) { return b.lv_edv_ml; }) == Approx((135 - 52 + 160 + 58) / 2.0).margin((160 + 58 - 135 + 52) / 2.0));
  CHECK(mean([](auto& b) { return b.lv_esv_ml; }) == Approx((42 - 24 + 50 + 32) / 2.0).margin((50 + 32 - 42 + 24) / 2.0));
  // Chuang et al. 2014 (J Magn Reson Imaging 39:895): EF 55-75 %.
  CHECK(mean([](auto& b) { return b.lv_ejection_fraction; }) == Approx(0.65).margin(0.10));
  // Catheterisation tables: cardiac output 4-8 L/min.
  CHECK(mean([](auto& b) { return b.cardiac_output_l_min; }) == Approx(6).margin(2));
  // Echo/cath handbooks (from memory): LV dP/dt max 1200-2000 mmHg/s.
  CHECK(mean([](auto& b) { return b.lv_dpdt_max_mmhg_s; }) == Approx(1600).margin(400));
  // Lewis et al. 1977 (Circulation 56:146): PEP/LVET 0.35 +- 0.04, within 2 SD.
  const double pep = mean([](auto& b) { return b.aortic_open_s - b.lv_activation_s; });
  const double lvet = mean([](auto& b) { return b.aortic_close_s - b.aortic_open_s; });
  CHECK(pep / lvet == Approx(0.35).margin(0.08));
  // Population tissue-Doppler study (from memory): IVCT 40 +- 10 ms (2 SD); Doppler handbooks:
  // IVRT 70-100 ms.
  CHECK(mean([](auto& b) { return (b.aortic_open_s - b.mitral_close_s) * 1e3; }) == Approx(40).margin(20));
  CHECK(mean([](auto& b) { return (b.mitral_open_s - b.aortic_close_s) * 1e3; }) == Approx(85).margin(15));
}

TEST_CASE("systolic time intervals follow Weissler's regressions", "[circulation]") {
  // Weissler, Harris & Schoenfeld 1968 (Circulation 37:149), men: QS2 = 546 - 2.1 HR (SD 14),
  // LVET = 413 - 1.7 HR (SD 10), PEP = 131 - 0.4 HR (SD 13) ms; each checked within 2 SD.
  for (double hr : {60.0, 75.0, 90.0, 110.0}) {
    const CirculationResult r = simulate_circulation(still(subject(State::rest, 0.0, 4.0, hr)));
    const double qs2 = beat_mean(r, [](auto& b) { return (b.aortic_close_s - b.lv_activation_s) * 1e3; });
    const double lvet = beat_mean(r, [](auto& b) { return (b.aortic_close_s - b.aortic_open_s) * 1e3; });
    const double pep = beat_mean(r, [](auto& b) { return (b.aortic_open_s - b.lv_activation_s) * 1e3; });
    INFO("HR " << hr << ": QS2 " << qs2 << ", LVET " << lvet << ", PEP " << pep);
    CHECK(qs2 == Approx(546 - 2.1 * hr).margin(2 * 14));
    CHECK(lvet == Approx(413 - 1.7 * hr).margin(2 * 10));
    CHECK(pep == Approx(131 - 0.4 * hr).margin(2 * 13));
  }
}

TEST_CASE("inspiration raises RV stroke volume and widens the A2-P2 interval", "[circulation]") {
  const CirculationResult r = simulate_circulation(subject(State::rest, 0.0, 24.0));
  // End-expiration: the last part of expiration and the first of inspiration (the venous return
  // rises with a lag of about a quarter breath); late inspiration: phase 0.3-0.6.
  const auto end_expiration = [](const BeatHemodynamics& b) { return b.resp_phase >= 0.85 || b.resp_phase < 0.1; };
  const auto late_inspiration = [](const BeatHemodynamics& b) { return b.resp_phase >= 0.3 && b.resp_phase < 0.6; };
  const auto rv_sv = [](const BeatHemodynamics& b) { return b.rv_stroke_volume_ml; };
  const double sv_exp = beat_mean(r, rv_sv, end_expiration), sv_insp = beat_mean(r, rv_sv, late_inspiration);
  const double split_exp = beat_mean(r, split_ms, end_expiration), split_insp = beat_mean(r, split_ms, late_inspiration);
  INFO("RV SV " << sv_exp << " -> " << sv_insp << " mL, split " << split_exp << " -> " << split_insp << " ms");
  // CHECK_VALUES (respiration, from memory): RV stroke volume +21 +- 10 % on inspiration; the
  // issue asks for +10-30 %.
  CHECK(sv_insp / sv_exp - 1.0 == Approx(0.20).margin(0.10));
  // Castle & Jones 1961 (from memory): ~20 ms in expiration, ~40 ms in inspiration; expiratory split
  // < 30 ms (trade fact); widening 15-50 ms.
  CHECK(split_exp < 30.0);
  CHECK(split_insp - split_exp == Approx(32.5).margin(17.5));
  // CHECK_VALUES (respiration, from memory): the inspiratory fall of systolic pressure is < 10 mmHg.
  double lo = 1e9, hi = -1e9;
  for (const auto& b : r.beats) {
    lo = std::min(lo, b.aortic_systolic_mmhg);
    hi = std::max(hi, b.aortic_systolic_mmhg);
  }
  CHECK(hi - lo < 10.0);
}

TEST_CASE("every beat has its valve events in physiological order", "[circulation]") {
  const CirculationResult r = simulate_circulation(subject(State::rest, 0.0, 6.0));
  for (const auto& b : r.beats) {
    INFO("beat " << b.beat);
    // Common practice: the cardiac cycle's valve sequence (closure of the inflow valve, opening and
    // closure of the outflow valve, reopening of the inflow valve).
    CHECK(b.lv_activation_s < b.mitral_close_s);
    CHECK(b.mitral_close_s < b.aortic_open_s);
    CHECK(b.aortic_open_s < b.aortic_close_s);
    CHECK(b.aortic_close_s < b.mitral_open_s);
    // Right side: with the low pulmonary diastolic pressure of inspiration the atrial kick can open
    // the pulmonic valve just before the tricuspid has closed (a known limitation, see
    // docs/physiology.md), so only the closure and reopening order is required there.
    CHECK(b.tricuspid_close_s < b.pulmonic_close_s);
    CHECK(b.pulmonic_open_s < b.pulmonic_close_s);
    CHECK(b.pulmonic_close_s < b.tricuspid_open_s + 0.015);
    // Waider & Craige 1975 (Am J Cardiol 35:346): Q to M1 60 +- 15 ms, M1-T1 20-35 ms; the valve
    // closures lead the sounds by a few ms, so a wider window.
    CHECK((b.mitral_close_s - b.lv_activation_s) * 1e3 == Approx(55).margin(25));
    CHECK((b.tricuspid_close_s - b.mitral_close_s) * 1e3 == Approx(27.5).margin(22.5));
  }
  // Waider & Craige 1975: M1-T1 split 20-35 ms, on average over the breaths.
  CHECK(beat_mean(r, [](auto& b) { return (b.tricuspid_close_s - b.mitral_close_s) * 1e3; }) == Approx(27.5).margin(7.5));
  // The series covers at least one cycle on both sides of the record.
  CHECK(r.series.t0_s <= -r.beats.front().rr_s);
  CHECK(r.series.time_at(r.series.size() - 1) >= r.duration_s + r.beats.back().rr_s);
  CHECK(r.series.rate_hz == kSeriesRateHz);
}

TEST_CASE("the equations conserve blood volume", "[circulation]") {
  // Mass balance (common practice): the volume derivatives of a closed loop sum to zero.
  const CirculationParams p = default_circulation_params();
  const ActivationPlan plan = make_activation_plan({0.0, 0.8, 1.6}, p.timing, 0.16, 0.0);
  const Respiration resp({0.0, 4.0}, 4.0, 0.4, -3.0, 3.0);
  const CirculationModel model(p, &plan, &resp);
  CirculationState x = initial_state(p), d{};
  x[kQmi] = 120.0;
  x[kQao] = 350.0;
  x[kQpu] = 200.0;
  for (double t : {0.05, 0.2, 0.5, 1.0}) {
    model.rhs(x, d, t);
    double sum = 0;
    for (int i = kVla; i <= kVpv; ++i) sum += d[i];
    CHECK(sum == Approx(0.0).margin(1e-9));
  }
  CHECK(total_volume_ml(x) == Approx(p.blood_volume_ml).margin(1e-6));
}

TEST_CASE("the same subject gives the same result, another record differs", "[circulation]") {
  SubjectSpec s = subject(State::rest, 0.0, 3.0);
  const CirculationResult a = simulate_circulation(s), b = simulate_circulation(s);
  REQUIRE(a.series.size() == b.series.size());
  CHECK(a.series.p_lv == b.series.p_lv);
  s.record_index = 4;
  const CirculationResult c = simulate_circulation(s);
  CHECK(c.beats.front().rr_s != a.beats.front().rr_s);
}

TEST_CASE("bad subjects are refused before integrating", "[circulation]") {
  SubjectSpec s = subject(State::lv_failure, 1.4);
  CHECK_THROWS_WITH(simulate_circulation(s), Catch::Contains("severity = 1.4") && Catch::Contains("[0, 1]"));
  s = subject(State::rest);
  s.params.heart_rate_bpm = -5.0;
  CHECK_THROWS_AS(simulate_circulation(s), InputError);
  s = subject(State::rest);
  s.params.respiration_rate_per_min = 0.0;
  CHECK_THROWS_WITH(simulate_circulation(s), Catch::Contains("respiration_rate_per_min"));
}
