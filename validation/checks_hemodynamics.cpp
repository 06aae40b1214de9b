// Hemodynamic checks: rest ranges, systolic time intervals, exercise, failure, respiration.
// Tolerances: published normal ranges are used as they stand; a mean +- SD accepts 2 SD; a value
// recalled from memory without an SD ("about X") accepts half of it either side. Each exception
// is stated where it is made (docs/validation.md).
#include <algorithm>
#include <cmath>

#include <fmt/format.h>

#include "validation/checks.hpp"
#include "validation/measures.hpp"

namespace stethogen::validation {
namespace {

using gen::BeatHemodynamics;

const char* const kCathTable = "standard catheterisation reference table (Grossman's)";
const char* const kWeissler = "Weissler, Harris & Schoenfeld 1968, Circulation 37:149";
const char* const kHigginbotham = "Higginbotham et al. 1986, Circ Res 58:281";

// Record-window means of one sweep record's circulation.
struct Summary {
  double hr, co, sv, aos, aod, ra, la, lv_ef, rv_ef, svr, split_ms;
};

Summary summarise(const Run& run) {
  const auto& c = run.circulation;
  Summary s;
  s.hr = beat_mean(c, [](auto& b) { return 60.0 / b.rr_s; });
  s.co = beat_mean(c, [](auto& b) { return b.cardiac_output_l_min; });
  s.sv = beat_mean(c, [](auto& b) { return b.lv_stroke_volume_ml; });
  s.aos = beat_mean(c, [](auto& b) { return b.aortic_systolic_mmhg; });
  s.aod = beat_mean(c, [](auto& b) { return b.aortic_diastolic_mmhg; });
  s.ra = beat_mean(c, [](auto& b) { return b.ra_mean_mmhg; });
  s.la = beat_mean(c, [](auto& b) { return b.la_mean_mmhg; });
  s.lv_ef = beat_mean(c, [](auto& b) { return b.lv_ejection_fraction; });
  s.rv_ef = beat_mean(c, [](auto& b) { return b.rv_ejection_fraction; });
  // Systemic vascular resistance, mmHg min / L: (mean arterial - right atrial) / cardiac output,
  // mean arterial pressure estimated as (systolic + 2 diastolic) / 3 (common practice).
  s.svr = ((s.aos + 2.0 * s.aod) / 3.0 - s.ra) / s.co;
  // The split as the truth stores it: P2 onset minus A2 onset at the heart level.
  s.split_ms = row_mean(run.record, [](const BeatRow& b) { return b.a2p2_split_ms; });
  return s;
}

std::vector<Summary> summarise_all(const std::vector<Run>& runs, std::size_t first, std::size_t count) {
  std::vector<Summary> out;
  for (std::size_t i = first; i < first + count; ++i) out.push_back(summarise(runs.at(i)));
  return out;
}

template <typename F>
std::vector<double> column(const std::vector<Summary>& s, F f) {
  std::vector<double> v;
  for (const Summary& x : s) v.push_back(f(x));
  return v;
}

}  // namespace

std::vector<CheckResult> rest_hemodynamics_checks(const Cohort& cohort) {
  const gen::CirculationResult& c = cohort.of("rest").front().circulation;
  const auto m = [&](auto f) { return beat_mean(c, f); };
  const std::string g = "rest hemodynamics";
  std::vector<CheckResult> out;
  out.push_back(evaluate({g, "aortic systolic pressure", "mmHg", "90-140", 90, 140, kCathTable, true},
                         m([](auto& b) { return b.aortic_systolic_mmhg; })));
  out.push_back(evaluate({g, "aortic diastolic pressure", "mmHg", "60-90", 60, 90, kCathTable, true},
                         m([](auto& b) { return b.aortic_diastolic_mmhg; })));
  out.push_back(evaluate({g, "LV end-diastolic pressure", "mmHg", "4-12", 4, 12, kCathTable, true},
                         m([](auto& b) { return b.lv_edp_mmhg; })));
  out.push_back(evaluate({g, "RV systolic pressure", "mmHg", "15-30", 15, 30, kCathTable, true},
                         m([](auto& b) { return b.rv_systolic_mmhg; })));
  out.push_back(evaluate({g, "RV end-diastolic pressure", "mmHg", "0-8", 0, 8, kCathTable, true},
                         m([](auto& b) { return b.rv_edp_mmhg; })));
  out.push_back(evaluate({g, "PA systolic pressure", "mmHg", "15-30", 15, 30, kCathTable, true},
                         m([](auto& b) { return b.pa_systolic_mmhg; })));
  out.push_back(evaluate({g, "PA diastolic pressure", "mmHg", "4-12", 4, 12, kCathTable, true},
                         m([](auto& b) { return b.pa_diastolic_mmhg; })));
  // 2 SD, and never above the upper limit of normal (20 mmHg).
  out.push_back(evaluate({g, "PA mean pressure", "mmHg", "14 +- 3.3 (normal < 20)", 14 - 6.6, 20,
                          "Kovacs et al. 2009, Eur Respir J 34:888"},
                         m([](auto& b) { return b.pa_mean_mmhg; })));
  out.push_back(evaluate({g, "LA (wedge) mean pressure", "mmHg", "4-12", 4, 12, kCathTable, true},
                         m([](auto& b) { return b.la_mean_mmhg; })));
  out.push_back(evaluate({g, "RA mean pressure", "mmHg", "2-6", 2, 6, kCathTable, true},
                         m([](auto& b) { return b.ra_mean_mmhg; })));
  // Either sex within 2 SD: from women's mean - 2 SD to men's mean + 2 SD.
  out.push_back(evaluate({g, "LV end-diastolic volume", "mL", "160 +- 29 men, 135 +- 26 women", 135 - 52, 160 + 58,
                          "Hudsmith et al. 2005, J Cardiovasc Magn Reson 7:775"},
                         m([](auto& b) { return b.lv_edv_ml; })));
  out.push_back(evaluate({g, "LV end-systolic volume", "mL", "50 +- 16 men, 42 +- 12 women", 42 - 24, 50 + 32,
                          "Hudsmith et al. 2005, J Cardiovasc Magn Reson 7:775"},
                         m([](auto& b) { return b.lv_esv_ml; })));
  out.push_back(evaluate({g, "LV ejection fraction", "%", "55-75", 55, 75, "Chuang et al. 2014, J Magn Reson Imaging 39:895"},
                         100 * m([](auto& b) { return b.lv_ejection_fraction; })));
  out.push_back(evaluate({g, "cardiac output", "L/min", "4-8", 4, 8, "catheterisation tables"},
                         m([](auto& b) { return b.cardiac_output_l_min; })));
  out.push_back(evaluate({g, "LV dP/dt max", "mmHg/s", "1200-2000", 1200, 2000, "echo/cath handbooks", true},
                         m([](auto& b) { return b.lv_dpdt_max_mmhg_s; })));
  const double pep = m([](auto& b) { return b.aortic_open_s - b.lv_activation_s; });
  const double lvet = m([](auto& b) { return b.aortic_close_s - b.aortic_open_s; });
  out.push_back(evaluate({g, "PEP / LVET", "", "0.35 +- 0.04", 0.35 - 0.08, 0.35 + 0.08, "Lewis et al. 1977, Circulation 56:146"},
                         pep / lvet));
  out.push_back(evaluate({g, "isovolumic contraction time", "ms", "40 +- 10", 20, 60, "population tissue-Doppler study", true},
                         m([](auto& b) { return (b.aortic_open_s - b.mitral_close_s) * 1e3; })));
  out.push_back(evaluate({g, "isovolumic relaxation time", "ms", "70-100", 70, 100, "Doppler handbooks"},
                         m([](auto& b) { return (b.mitral_open_s - b.aortic_close_s) * 1e3; })));
  return out;
}

std::vector<CheckResult> systolic_interval_checks(const Cohort& cohort) {
  const std::string g = "systolic time intervals vs heart rate";
  std::vector<CheckResult> out;
  for (const Run& run : cohort.of("sti")) {
    // The regressions are evaluated at the measured rate (the nominal one labels the row).
    const double nominal_hr = *run.record.subject.params.heart_rate_bpm;
    const double hr = beat_mean(run.circulation, [](auto& b) { return 60.0 / b.rr_s; });
    // Weissler's QS2 runs from the Q wave to the first high-frequency vibration of A2; LVET is
    // the ejection time (carotid upstroke to incisura, here aortic valve opening to closure);
    // PEP = QS2 - LVET, by subtraction as in the paper.
    const Record& r = run.record;
    const double qs2 = row_mean(r, [&](const BeatRow& b) {
      auto a2 = heart_event(r, b.beat, EventKind::A2);
      return a2 ? (a2->onset_s - b.activation_s) * 1e3 : NAN;
    });
    const double lvet = beat_mean(run.circulation, [](auto& b) { return (b.aortic_close_s - b.aortic_open_s) * 1e3; });
    const auto row = [&](const char* q, double a, double slope, double sd, double v) {
      out.push_back(evaluate({g, fmt::format("{} at {:.0f} bpm", q, nominal_hr), "ms",
                              fmt::format("{:.0f} - {} HR = {:.0f} (SD {:.0f})", a, slope, a - slope * hr, sd),
                              a - slope * hr - 2 * sd, a - slope * hr + 2 * sd, std::string(kWeissler) + " (men)"},
                             v));
    };
    row("QS2", 546, 2.1, 14, qs2);
    row("LVET", 413, 1.7, 10, lvet);
    row("PEP", 131, 0.4, 13, qs2 - lvet);
    if (nominal_hr == 75.0) {
      // The women's regression (from memory) and an independent one (from memory), each with the
      // men's SD of 14 ms.
      const auto qs2_row = [&](const char* q, double a, double slope, std::string source) {
        out.push_back(evaluate({g, q, "ms", fmt::format("{:.0f} - {} HR = {:.0f}", a, slope, a - slope * hr),
                                a - slope * hr - 28, a - slope * hr + 28, std::move(source), true},
                               qs2));
      };
      qs2_row("QS2 at 75 bpm, women", 549, 2.0, std::string(kWeissler) + " (women)");
      qs2_row("QS2 at 75 bpm, independent cohort", 541, 2.2, "Boudoulas et al. 1981, Chest 80:613");
    }
  }
  return out;
}

std::vector<CheckResult> exercise_checks(const Cohort& cohort) {
  const auto& runs = cohort.of("exercise");
  const std::vector<Summary> s = summarise_all(runs, 0, runs.size());  // intensity 0, 0.25, ..., 1
  const Summary &rest = s.front(), &peak = s.back();
  const std::string g = "exercise (intensity 0 to 1)";
  std::vector<CheckResult> out;
  // Peak rate within 15 bpm (about one SD of peak rates in healthy adults, common practice).
  out.push_back(evaluate({g, "heart rate at peak", "bpm", "167", 152, 182, kHigginbotham}, peak.hr));
  // The published ratios are for cardiac and stroke-volume index; accepted within 20 %.
  out.push_back(evaluate({g, "cardiac output, peak / rest", "", "x3.2", 3.2 * 0.8, 3.2 * 1.2, kHigginbotham},
                         peak.co / rest.co));
  out.push_back(evaluate({g, "stroke volume, peak / rest", "", "x1.4", 1.4 * 0.8, 1.4 * 1.2, kHigginbotham},
                         peak.sv / rest.sv));
  // "Plateauing at high load": less than 8 % between intensity 0.75 and 1.
  out.push_back(evaluate({g, "stroke volume, intensity 1 / 0.75", "", "plateau", 0.92, 1.08, kHigginbotham},
                         peak.sv / s[s.size() - 2].sv));
  out.push_back(evaluate({g, "systolic pressure change, peak - rest", "mmHg", "rises", 0, kInf, kHigginbotham},
                         peak.aos - rest.aos));
  out.push_back(evaluate({g, "diastolic pressure change, peak - rest", "mmHg", "flat or slightly up", -5, 15, kHigginbotham},
                         peak.aod - rest.aod));
  const double steps = static_cast<double>(s.size() - 1);
  out.push_back(evaluate({g, "steps with falling systemic resistance", "", "falls", steps, steps, kHigginbotham},
                         monotone_steps(column(s, [](auto& x) { return x.svr; }), -1)));
  out.push_back(evaluate({g, "steps with rising cardiac output", "", "rises", steps, steps, kHigginbotham},
                         monotone_steps(column(s, [](auto& x) { return x.co; }), +1)));
  return out;
}

std::vector<CheckResult> failure_checks(const Cohort& cohort) {
  const auto& runs = cohort.of("failure");
  const std::size_t n = runs.size() / 3;  // lv, rv, global sweeps of equal length, severity 0 .. 1
  const std::vector<Summary> lv = summarise_all(runs, 0, n), rv = summarise_all(runs, n, n),
                             gl = summarise_all(runs, 2 * n, n);
  const double steps = static_cast<double>(n - 1);
  const auto ef = [](auto& x) { return x.lv_ef; };
  const auto rvef = [](auto& x) { return x.rv_ef; };
  std::vector<CheckResult> out;
  std::string g = "LV failure (severity 0 to 1)";
  out.push_back(evaluate({g, "steps with falling LV EF", "", "falls with severity", steps, steps, "ESC 2021 classes"},
                         monotone_steps(column(lv, ef), -1)));
  out.push_back(evaluate({g, "LV EF at severity 0.75", "%", "HFrEF <= 40", -kInf, 40, "ESC 2021 classes"},
                         100 * lv[n - 2].lv_ef));
  out.push_back(evaluate({g, "LV EF at severity 1", "%", "severe < 30", -kInf, 30, "ASE 2015 grading", true},
                         100 * lv[n - 1].lv_ef));
  out.push_back(evaluate({g, "wedge (LA mean) pressure at severity 1", "mmHg", ">= 20 in advanced failure", 20, kInf,
                          "advanced-failure hemodynamics (CHECK_VALUES.md)"},
                         lv[n - 1].la));
  // Cardiac index with a body-surface area of 1.9 m2 (a typical adult, common practice);
  // published 1.75-2.0, widened by 0.25 either side for the assumed body size.
  out.push_back(evaluate({g, "cardiac index at severity 1", "L/min/m2", "1.75-2.0 in advanced failure", 1.5, 2.25,
                          "advanced-failure hemodynamics (CHECK_VALUES.md)"},
                         lv[n - 1].co / 1.9));
  out.push_back(evaluate({g, "A2-P2 split at severity 0", "ms", "normal order (P2 after A2)", 0, kInf, "common practice"},
                         lv[0].split_ms));
  out.push_back(evaluate({g, "A2-P2 split at severity 0.75", "ms", "reversed (P2 before A2)", -kInf, 0, "common practice"},
                         lv[n - 2].split_ms));
  out.push_back(evaluate({g, "A2-P2 split at severity 1", "ms", "reversed (P2 before A2)", -kInf, 0, "common practice"},
                         lv[n - 1].split_ms));
  g = "RV failure (severity 0 to 1)";
  out.push_back(evaluate({g, "steps with falling RV EF", "", "falls with severity", steps, steps, "common practice"},
                         monotone_steps(column(rv, rvef), -1)));
  out.push_back(evaluate({g, "RV EF at severity 1", "%", "dysfunction < 45", -kInf, 45, "CHECK_VALUES.md (RV dysfunction)"},
                         100 * rv[n - 1].rv_ef));
  out.push_back(evaluate({g, "steps with rising RA pressure", "", "rises with severity", steps, steps, "common practice"},
                         monotone_steps(column(rv, [](auto& x) { return x.ra; }), +1)));
  out.push_back(evaluate({g, "RA mean pressure at severity 1", "mmHg", "> 14 high risk", 14, kInf,
                          "CHECK_VALUES.md (RV dysfunction)"},
                         rv[n - 1].ra));
  out.push_back(evaluate({g, "steps with widening A2-P2 split", "", "widened", steps, steps, "common practice"},
                         monotone_steps(column(rv, [](auto& x) { return x.split_ms; }), +1)));
  out.push_back(evaluate({g, "A2-P2 split widening, severity 1 - 0", "ms", "widened", 0, kInf, "common practice"},
                         rv[n - 1].split_ms - rv[0].split_ms));
  g = "global failure (severity 0 to 1)";
  out.push_back(evaluate({g, "steps with falling LV EF", "", "falls with severity", steps, steps, "ESC 2021 classes"},
                         monotone_steps(column(gl, ef), -1)));
  out.push_back(evaluate({g, "steps with falling RV EF", "", "falls with severity", steps, steps, "common practice"},
                         monotone_steps(column(gl, rvef), -1)));
  out.push_back(evaluate({g, "steps with falling cardiac output", "", "falls with severity", steps, steps, "common practice"},
                         monotone_steps(column(gl, [](auto& x) { return x.co; }), -1)));
  out.push_back(evaluate({g, "LV EF at severity 0.75", "%", "HFrEF <= 40", -kInf, 40, "ESC 2021 classes"},
                         100 * gl[n - 2].lv_ef));
  return out;
}

std::vector<CheckResult> respiration_checks(const Cohort& cohort) {
  const Run& run = cohort.of("rest").front();
  const gen::CirculationResult& c = run.circulation;
  const gen::HemodynamicSeries& s = c.series;
  const std::string g = "respiration (rest, quiet breathing)";
  std::vector<CheckResult> out;
  // Measured on the recorded window of the simulated series.
  double p_lo = kInf, p_hi = -kInf, turns = 0;
  for (std::size_t k = 1; k < s.size(); ++k) {
    if (s.time_at(k) < 0 || s.time_at(k) >= c.duration_s) continue;
    p_lo = std::min(p_lo, s.p_thorax[k]);
    p_hi = std::max(p_hi, s.p_thorax[k]);
    double d = s.resp_phase[k] - s.resp_phase[k - 1];
    turns += d < -0.5 ? d + 1.0 : d;  // unwrap the phase
  }
  out.push_back(evaluate({g, "respiration rate", "/min", "12-20", 12, 20, "common practice", true},
                         turns / c.duration_s * 60.0));
  out.push_back(evaluate({g, "pleural pressure swing", "mmHg", "about 2-4", 2, 4, "common practice"}, p_hi - p_lo));
  // The venous return follows the pleural pressure with a lag of about a quarter breath, so the
  // windows are end-expiration (phase >= 0.85 or < 0.1) and late inspiration (0.3-0.6), as in
  // the engine's tests (tests/circulation/test_engine_rest.cpp).
  const BeatFilter expiration = [](const BeatHemodynamics& b) { return b.resp_phase >= 0.85 || b.resp_phase < 0.1; };
  const BeatFilter inspiration = [](const BeatHemodynamics& b) { return b.resp_phase >= 0.3 && b.resp_phase < 0.6; };
  const auto change = [&](auto f) { return 100.0 * (beat_mean(c, f, inspiration) / beat_mean(c, f, expiration) - 1.0); };
  out.push_back(evaluate({g, "RV stroke volume change on inspiration", "%", "+21 +- 10", 1, 41, "common practice", true},
                         change([](auto& b) { return b.rv_stroke_volume_ml; })));
  out.push_back(evaluate({g, "LV stroke volume change on inspiration", "%", "about -7", -10.5, -3.5, "common practice", true},
                         change([](auto& b) { return b.lv_stroke_volume_ml; })));
  double sys_lo = kInf, sys_hi = -kInf;
  for (const BeatRow& b : run.record.beats) {
    sys_lo = std::min(sys_lo, b.aortic_systolic_mmhg);
    sys_hi = std::max(sys_hi, b.aortic_systolic_mmhg);
  }
  out.push_back(evaluate({g, "respiratory fall of systolic pressure", "mmHg", "< 10", 0, 10, "common practice", true},
                         sys_hi - sys_lo));
  // The split from the truth's heart-level A2 and P2 onsets, beats classified by their phase.
  const auto split = [&](double lo1, double hi1, double lo2, double hi2) {
    return row_mean(run.record, [](const BeatRow& b) { return b.a2p2_split_ms; }, [=](const BeatRow& b) {
      return (b.resp_phase >= lo1 && b.resp_phase < hi1) || (b.resp_phase >= lo2 && b.resp_phase < hi2);
    });
  };
  const double split_exp = split(0.85, 1.0, 0.0, 0.1), split_insp = split(0.3, 0.6, 0.3, 0.6);
  out.push_back(evaluate({g, "A2-P2 split in expiration", "ms", "about 20", 10, 30, "Castle & Jones 1961, Circulation", true},
                         split_exp));
  out.push_back(evaluate({g, "A2-P2 split in expiration, upper limit", "ms", "< 30", -kInf, 30, "common practice"}, split_exp));
  out.push_back(evaluate({g, "A2-P2 split in inspiration", "ms", "about 40", 20, 60, "Castle & Jones 1961, Circulation", true},
                         split_insp));
  out.push_back(evaluate({g, "A2-P2 split widening on inspiration", "ms", "about 20", 10, 30, "Castle & Jones 1961, Circulation", true},
                         split_insp - split_exp));
  return out;
}

}  // namespace stethogen::validation
