// The Markdown report and the figure data of `validate --report`.
#include <cmath>
#include <sstream>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "core/version.hpp"
#include "validation/measures.hpp"
#include "validation/validate.hpp"

namespace stethogen::validation {
namespace {

// The stretch of the rest record the waveform figures show (s).
constexpr double kWindowStartS = 1.0, kWindowEndS = 4.0;
// Every how many samples of the circulation's dense series the pressure figure keeps.
constexpr std::size_t kPressureDecimation = 4;

// Rounded to 5 significant digits: the figures need no more and the file stays small.
double compact(double v) { return std::isfinite(v) ? std::stod(fmt::format("{:.5g}", v)) : 0.0; }

nlohmann::json waveform_json(const Run& run) {
  const Record& r = run.record;
  const auto first = static_cast<std::size_t>(kWindowStartS * r.sample_rate_hz);
  const auto last = std::min(r.pcg_clean.n_samples, static_cast<std::size_t>(kWindowEndS * r.sample_rate_hz));
  nlohmann::json j;
  j["record_id"] = r.subject.record_id;
  j["sample_rate_hz"] = r.sample_rate_hz;
  j["t0_s"] = static_cast<double>(first) / r.sample_rate_hz;
  j["sites"] = nlohmann::json::array();
  j["pcg"] = nlohmann::json::array();
  j["states"] = nlohmann::json::array();
  for (std::size_t s = 0; s < r.sites.size(); ++s) {
    j["sites"].push_back(std::string(name(r.sites[s])));
    std::vector<double> x;
    std::vector<int> labels;
    for (std::size_t i = first; i < last; ++i) {
      x.push_back(compact(r.pcg_clean.at(s, i)));
      labels.push_back(r.states.at(s, i));
    }
    j["pcg"].push_back(x);
    j["states"].push_back(labels);
  }
  j["events"] = nlohmann::json::array();
  for (const Event& e : r.events) {
    if (static_cast<int>(e.kind) > static_cast<int>(EventKind::S4)) continue;  // components only
    if (e.offset_s < kWindowStartS || e.onset_s > kWindowEndS) continue;
    j["events"].push_back({{"kind", std::string(name(e.kind))}, {"site", e.site}, {"onset_s", e.onset_s},
                           {"peak_s", e.peak_s}, {"offset_s", e.offset_s}});
  }
  const gen::HemodynamicSeries& h = run.circulation.series;
  nlohmann::json p{{"rate_hz", h.rate_hz / kPressureDecimation}};
  std::vector<double> t, lv, ao, la;
  for (std::size_t k = 0; k < h.size(); k += kPressureDecimation) {
    if (h.time_at(k) < kWindowStartS || h.time_at(k) >= kWindowEndS) continue;
    t.push_back(compact(h.time_at(k)));
    lv.push_back(compact(h.p_lv[k]));
    ao.push_back(compact(h.p_ao[k]));
    la.push_back(compact(h.p_la[k]));
  }
  p["time_s"] = t;
  p["lv_mmhg"] = lv;
  p["aortic_mmhg"] = ao;
  p["la_mmhg"] = la;
  j["pressures"] = p;
  return j;
}

nlohmann::json sweep_point(const Run& run) {
  const Record& r = run.record;
  const SubjectSpec& s = r.subject;
  const auto col = [&](auto f) { return row_mean(r, f); };
  return {{"record_id", s.record_id},
          {"state", std::string(name(s.state))},
          {"level", s.state == State::exercise ? s.exercise_intensity : s.severity},
          {"lv_dpdt_max_mmhg_s", col([](const BeatRow& b) { return b.lv_dpdt_max_mmhg_s; })},
          {"cardiac_output_l_min", beat_mean(run.circulation, [](auto& b) { return b.cardiac_output_l_min; })},
          {"s1_amplitude", col([](const BeatRow& b) { return b.s1_amplitude; })},
          {"s2_amplitude", col([](const BeatRow& b) { return b.s2_amplitude; })},
          {"a2p2_split_ms", col([](const BeatRow& b) { return b.a2p2_split_ms; })}};
}

}  // namespace

std::string figure_data_json(const Cohort& cohort) {
  nlohmann::json j;
  j["generator_version"] = kGeneratorVersion;
  j["waveform"] = waveform_json(cohort.of("rest").front());
  j["sweeps"] = nlohmann::json::array();
  for (const char* stem : {"exercise", "failure"})
    for (const Run& run : cohort.of(stem)) j["sweeps"].push_back(sweep_point(run));
  j["snr"] = nlohmann::json::array();
  for (const Run& run : cohort.of("snr"))
    j["snr"].push_back({{"record_id", run.record.subject.record_id},
                        {"target_db", run.record.summary.snr_target_db},
                        {"achieved_db", run.record.summary.snr_achieved_db}});
  return j.dump() + "\n";
}

std::string format_report(const std::vector<CheckResult>& results, bool with_figures, const std::string& figure_note) {
  std::ostringstream out;
  const std::size_t failed = count_failures(results);
  out << "# stethogen validation report\n\n"
      << fmt::format("Generator version {}. {} checks, {} passed, {} failed.\n\n", kGeneratorVersion, results.size(),
                     results.size() - failed, failed)
      << "Each row compares a quantity measured on records synthesised from the validation recipes\n"
         "(validation/recipes/) with a published value or range. \"accepted\" is the range the\n"
         "check uses: the published range, or mean +- 2 SD, or a value recalled from memory\n"
         "(marked) widened as docs/validation.md explains. Regenerate with\n"
         "`stethogen validate --report DIR`.\n";
  if (failed) {
    out << "\nFailed checks:\n\n";
    for (const auto& r : results)
      if (!r.pass)
        out << fmt::format("- {}: {}, simulated {} (accepted {})\n", r.criterion.group, r.criterion.quantity,
                           format_value(r.value), accepted_range(r.criterion));
  }
  out << format_markdown_table(results);
  out << "\n## Figures\n\n";
  if (!with_figures) {
    out << "Figures were not drawn: " << figure_note << "\n";
    return out.str();
  }
  const std::vector<std::pair<std::string, std::string>> captions = {
      {"record_states.png", "A resting record at the four sites: four-state labels and component markers"},
      {"pressures_pcg.png", "LV, aortic and LA pressure above the PCG of the same beats"},
      {"s1_amplitude.png", "S1 amplitude against LV dP/dt max and against cardiac output over the sweeps"},
      {"split_severity.png", "A2-P2 split against failure severity, LV and RV failure"},
      {"spectrogram.png", "Spectrogram of S1 and S2 at the mitral area"},
      {"snr.png", "Achieved against target SNR"}};
  for (const auto& [file, caption] : captions) out << fmt::format("![{}]({})\n\n*{}*\n\n", caption, file, caption);
  return out.str();
}

}  // namespace stethogen::validation
