// Exercise and failure sweeps against published trends, splitting trends, and robustness over the
// whole allowed parameter box.
#include <catch2/catch.hpp>

#include <cmath>
#include <vector>

#include "engine_helpers.hpp"

using namespace stethogen;
using namespace stethogen::gen;
using namespace stethogen::gen::test;

namespace {

struct Summary {
  double hr, co, sv, map, ra, aod, aos, lv_ef, rv_ef, la, split;
};

Summary summarise(const CirculationResult& r) {
  Summary s;
  s.hr = beat_mean(r, [](auto& b) { return 60.0 / b.rr_s; });
  s.co = beat_mean(r, [](auto& b) { return b.cardiac_output_l_min; });
  s.sv = beat_mean(r, [](auto& b) { return b.lv_stroke_volume_ml; });
  s.aod = beat_mean(r, [](auto& b) { return b.aortic_diastolic_mmhg; });
  s.aos = beat_mean(r, [](auto& b) { return b.aortic_systolic_mmhg; });
  s.map = (s.aos + 2.0 * s.aod) / 3.0;
  s.ra = beat_mean(r, [](auto& b) { return b.ra_mean_mmhg; });
  s.la = beat_mean(r, [](auto& b) { return b.la_mean_mmhg; });
  s.lv_ef = beat_mean(r, [](auto& b) { return b.lv_ejection_fraction; });
  s.rv_ef = beat_mean(r, [](auto& b) { return b.rv_ejection_fraction; });
  s.split = beat_mean(r, split_ms);
  return s;
}

std::vector<Summary> sweep(State state, const std::vector<double>& levels, double duration_s = 6.0) {
  std::vector<Summary> out;
  for (double x : levels) out.push_back(summarise(simulate_circulation(subject(state, x, duration_s))));
  return out;
}

const std::vector<double> kLevels = {0.0, 0.25, 0.5, 0.75, 1.0};

}  // namespace

TEST_CASE("exercise raises cardiac output about threefold while stroke volume plateaus", "[circulation]") {
  const auto s = sweep(State::exercise, kLevels);
  // Higginbotham et al. 1986 (Circ Res 58:281): HR 73 -> 167 bpm, cardiac index x3.2, stroke volume
  // index x1.4 plateauing at high load, systolic pressure up, diastolic flat or slightly up, SVR down.
  CHECK(s.back().hr == Approx(167).margin(15));
  CHECK(s.back().co / s.front().co == Approx(3.0).margin(0.5));
  CHECK(s.back().sv / s.front().sv == Approx(1.3).margin(0.25));
  CHECK(s.back().sv / s[3].sv == Approx(1.0).margin(0.08));  // plateau between 0.75 and 1
  CHECK(s.back().aos > s.front().aos);
  for (std::size_t i = 1; i < s.size(); ++i) {
    INFO("intensity " << kLevels[i]);
    CHECK(s[i].co > s[i - 1].co);
    const double svr = (s[i].map - s[i].ra) / s[i].co, svr_before = (s[i - 1].map - s[i - 1].ra) / s[i - 1].co;
    CHECK(svr < svr_before);
    CHECK(s[i].aod - s.front().aod == Approx(5.0).margin(10.0));  // -5 .. +15 mmHg: flat or slightly up
  }
}

TEST_CASE("LV failure: EF falls, wedge pressure rises, S2 splitting reverses", "[circulation]") {
  const auto s = sweep(State::lv_failure, kLevels);
  for (std::size_t i = 1; i < s.size(); ++i) {
    INFO("severity " << kLevels[i]);
    CHECK(s[i].lv_ef < s[i - 1].lv_ef);
    CHECK(s[i].la > s[i - 1].la);
  }
  // ESC 2021 classes: HFrEF EF <= 40 %; ASE 2015 (from memory): moderate 30-40, severe < 30 %.
  CHECK(s[3].lv_ef <= 0.40);
  CHECK(s[4].lv_ef < 0.30);
  // CHECK_VALUES (systolic failure): advanced failure has wedge pressure >= 20 mmHg.
  CHECK(s[4].la >= 20.0);
  // Trade fact: splitting reverses (P2 before A2) at higher severities.
  CHECK(s[0].split > 0.0);
  CHECK(s[3].split < 0.0);
  CHECK(s[4].split < 0.0);
}

TEST_CASE("RV failure: RV EF falls below 45 %, RA pressure rises, splitting widens", "[circulation]") {
  const auto s = sweep(State::rv_failure, kLevels);
  for (std::size_t i = 1; i < s.size(); ++i) {
    INFO("severity " << kLevels[i]);
    CHECK(s[i].rv_ef < s[i - 1].rv_ef);
    CHECK(s[i].ra > s[i - 1].ra);
  }
  // CHECK_VALUES (systolic failure): RV dysfunction is RV EF < 45 %.
  CHECK(s.back().rv_ef < 0.45);
  // Trade fact: RV failure widens the split.
  CHECK(s[1].split > s[0].split);
  CHECK(s[2].split > s[1].split);
  CHECK(s[4].split > s[2].split);
}

TEST_CASE("global failure lowers both ejection fractions", "[circulation]") {
  const auto s = sweep(State::global_failure, kLevels);
  for (std::size_t i = 1; i < s.size(); ++i) {
    INFO("severity " << kLevels[i]);
    CHECK(s[i].lv_ef < s[i - 1].lv_ef);
    CHECK(s[i].rv_ef < s[i - 1].rv_ef);
    CHECK(s[i].co < s[i - 1].co);
  }
  // ESC 2021: HFrEF EF <= 40 % at moderate-severe severity.
  CHECK(s[3].lv_ef <= 0.40);
}

TEST_CASE("the whole parameter box integrates without NaN, negative volume or stall", "[circulation]") {
  struct Case {
    State state;
    double level;
  };
  const std::vector<Case> cases = {{State::rest, 0},         {State::exercise, 0.5},  {State::exercise, 1},
                                   {State::lv_failure, 0.5}, {State::lv_failure, 1},  {State::rv_failure, 0.5},
                                   {State::rv_failure, 1},   {State::global_failure, 0.5}, {State::global_failure, 1}};
  const auto check_result = [](const CirculationResult& r) {
    REQUIRE(!r.beats.empty());
    CHECK(r.ode_steps > 0);
    bool finite = true, positive = true;
    for (std::size_t k = 0; k < r.series.size(); ++k) {
      for (const auto* ch : {&r.series.p_lv, &r.series.p_ao, &r.series.p_rv, &r.series.p_pa, &r.series.q_aortic})
        finite = finite && std::isfinite((*ch)[k]);
      for (const auto* ch : {&r.series.v_lv, &r.series.v_rv, &r.series.v_la, &r.series.v_ra})
        positive = positive && (*ch)[k] > 0.0;
    }
    CHECK(finite);
    CHECK(positive);
    for (const auto& b : r.beats) CHECK(std::isfinite(b.lv_stroke_volume_ml));
  };
  for (double hr : {40.0, 200.0}) {
    for (const Case& c : cases) {
      INFO("HR " << hr << ", state " << name(c.state) << ", level " << c.level);
      check_result(simulate_circulation(subject(c.state, c.level, 3.0, hr)));
    }
  }
  // Corners of the other subject parameters.
  SubjectSpec s = subject(State::rest, 0.0, 3.0);
  for (double bv : {2500.0, 8000.0}) {
    s.params.blood_volume_ml = bv;
    INFO("blood volume " << bv);
    check_result(simulate_circulation(s));
  }
  s = subject(State::rest, 0.0, 3.0);
  s.params.respiration_rate_per_min = 40.0;
  s.params.respiration_depth_mmhg = 10.0;
  s.params.rsa_fraction = 0.15;
  s.params.lf_fraction = 0.15;
  s.params.pr_interval_ms = 300.0;
  s.params.lv_rv_delay_ms = 80.0;
  check_result(simulate_circulation(s));
}
