// Stage timings: the stage functions of generator/pipeline.cpp called one by one with a thread
// CPU clock around each, then the whole synthesize_record on the same subject for the total.
// Writing is timed separately (writing_timing.cpp).
#include <time.h>

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <stdexcept>

#include "bench/bench.hpp"
#include "generator/circulation/simulate.hpp"
#include "generator/pipeline.hpp"
#include "generator/sources/heart_sounds.hpp"
#include "generator/transmission/render.hpp"
#include "generator/transmission/sensor.hpp"
#include "generator/truth/hemodynamic_traces.hpp"
#include "generator/truth/record_truth.hpp"
#include "noise/mix.hpp"
#include "recipe/plan.hpp"

namespace stethogen::bench {

double thread_cpu_s() {
  timespec ts{};
  clock_gettime(CLOCK_THREAD_CPUTIME_ID, &ts);
  return static_cast<double>(ts.tv_sec) + 1e-9 * static_cast<double>(ts.tv_nsec);
}

std::string bench_recipe_text(const std::string& source_dir, std::uint64_t count, double duration_s) {
  std::ifstream f(source_dir + "/bench/bench.toml");
  if (!f) throw std::runtime_error("cannot read " + source_dir + "/bench/bench.toml");
  std::stringstream ss;
  ss << f.rdbuf();
  std::string text = ss.str();
  const auto replace = [&](const std::string& key, const std::string& value) {
    std::size_t pos = text.find(key + "\n");
    if (pos == std::string::npos) throw std::runtime_error("bench.toml has no " + key);
    text.replace(pos, key.size(), value);
  };
  replace("COUNT", std::to_string(count));
  std::ostringstream d;
  d << duration_s;
  replace("DURATION", d.str());
  return text;
}

recipe::Recipe bench_recipe(const std::string& source_dir, std::uint64_t count, double duration_s) {
  return recipe::parse_recipe(bench_recipe_text(source_dir, count, duration_s), "bench.toml");
}

namespace {

// The rhythm stage as run_engine performs it (generator/circulation/simulate.cpp).
void rhythm_stage(const SubjectSpec& subject) {
  const gen::EngineSetup e = gen::map_subject_to_engine(subject);
  const double rr0 = 60.0 / e.rhythm.heart_rate_bpm;
  const double margin_s = rr0 * (1.0 + e.rhythm.rsa_fraction + e.rhythm.lf_fraction) + 0.25;
  const double breath_s = 60.0 / e.rhythm.respiration_rate_per_min;
  const double start = -margin_s - std::ceil(breath_s / rr0) * rr0;
  const gen::RhythmPlan plan = gen::make_rhythm(e.rhythm, e.circulation.thorax_end_expiratory_mmhg, subject.dataset_seed,
                                                subject.record_index, start - rr0, start,
                                                subject.params.duration_s + margin_s + 2.0 * rr0, 2);
  const gen::ActivationPlan act =
      gen::make_activation_plan(plan.lv_activation_s, e.circulation.timing, e.rhythm.pr_interval_s, e.rhythm.lv_rv_delay_s);
  if (act.pulses[gen::kLv].empty()) throw std::runtime_error("empty activation plan");
}

}  // namespace

StageTimes time_stages(const recipe::Recipe& recipe, std::uint64_t records, std::vector<Record>* kept) {
  StageTimes t;
  for (std::uint64_t i = 0; i < records; ++i) {
    const SubjectSpec subject = recipe::plan_record(recipe, i);
    double c0 = thread_cpu_s();
    rhythm_stage(subject);
    double c1 = thread_cpu_s();
    t.rhythm += c1 - c0;
    gen::EngineRun run = gen::run_engine(subject);
    double c2 = thread_cpu_s();
    // run_engine repeats the rhythm stage inside; its cost is counted once, under rhythm.
    t.circulation += (c2 - c1) - (c1 - c0);
    const gen::CirculationResult& circ = run.result;
    const auto n_samples = static_cast<std::size_t>(std::ceil(circ.duration_s * subject.sample_rate_hz - 1e-9));
    std::vector<gen::SoundComponent> components = gen::heart_sound_sources(circ, gen::draw_source_variation(subject));
    std::vector<gen::SoundGroup> groups = gen::group_components(components);
    double c3 = thread_cpu_s();
    t.sources += c3 - c2;
    gen::TransmissionPlan plan = gen::plan_transmission(subject);
    gen::Rendering rendering = gen::render_sites(components, groups, plan, n_samples);
    double c4 = thread_cpu_s();
    t.transmission += c4 - c3;
    noise::NoiseInputs in;
    in.subject = &subject;
    in.sample_rate_hz = subject.sample_rate_hz;
    in.clean = &rendering.clean;
    in.inspiration_fraction = circ.inspiration_fraction;
    const gen::HemodynamicSeries& s = circ.series;
    in.resp_phase = [&s](double time) {
      double pos = std::clamp(std::round((time - s.t0_s) * s.rate_hz), 0.0, static_cast<double>(s.size() - 1));
      return s.resp_phase[static_cast<std::size_t>(pos)];
    };
    noise::NoiseOutput noisy = noise::add_noise(in);
    double c5 = thread_cpu_s();
    t.noise += c5 - c4;
    gen::apply_output_stage(noisy.noisy, subject.params.sensor_gain_db, subject.sample_format, subject.sample_rate_hz);
    gen::apply_output_stage(rendering.clean, subject.params.sensor_gain_db, subject.sample_format,
                            subject.sample_rate_hz);
    double c6 = thread_cpu_s();
    t.output += c6 - c5;
    gen::Truth truth = gen::build_truth({circ, components, groups, rendering, subject.sample_rate_hz, n_samples});
    HemodynamicTraces traces = gen::hemodynamic_traces(circ);
    double c7 = thread_cpu_s();
    t.truth += c7 - c6;

    Record record = gen::synthesize_record(subject);
    double c8 = thread_cpu_s();
    t.pipeline += c8 - c7;
    if (kept) kept->push_back(std::move(record));

    t.audio_s += subject.params.duration_s;
    t.ode_steps += circ.ode_steps;
    t.rhs_evaluations += circ.rhs_evaluations;
    const double rr0 = 60.0 / run.setup.rhythm.heart_rate_bpm;
    t.run_in_simulated_s += run.run_in_beats * rr0;
    t.simulated_s += run.run_in_beats * rr0 + (s.time_at(s.size() - 1) - run.recording_start_s);
    ++t.records;
  }
  return t;
}

}  // namespace stethogen::bench
