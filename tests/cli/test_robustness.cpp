// Robustness sweep: records from the corners of the allowed parameter box (docs/recipe.md,
// docs/noise.md) must finish with finite samples and consistent truth, or fail with a
// RecordFailure that names the record. Every state, the heart-rate, intensity and severity
// extremes, sample rates 1000..48000 Hz, durations 2 s and 600 s, SNR -20 and 80 dB, every noise
// process (one profile each, plus one with all of them at high rates) and every sensor.
#include <catch2/catch.hpp>

#include <sndfile.h>

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <string>
#include <vector>

#include <fmt/format.h>

#include "../bundle/temp_dir.hpp"
#include "core/error.hpp"
#include "core/record.hpp"
#include "generator/pipeline.hpp"
#include "recipe/plan.hpp"
#include "recipe/recipe.hpp"

using namespace stethogen;
namespace fs = std::filesystem;

namespace {

// One noise profile per process of docs/noise.md, at the edges of their ranges where a record
// of a few seconds can show it, plus one with everything on.
const char* kNoiseProfiles = R"(
[noise.white]
sensor_white = { level_db = 60 }
[noise.pink]
ambient = { color = "pink", level_db = -60, site_coherence = 1, low_corner_hz = 0.01 }
[noise.brown]
ambient = { color = "brown", level_db = 60, site_coherence = 0 }
[noise.band]
ambient = { color = "band", band_hz = [0, 450] }
[noise.breath]
breath = { level_db = 60, corner_hz = 10, slope_db_per_octave = -40, upper_hz = 450, expiration_db = -40, site_coherence = 0 }
[noise.friction]
friction = { rate_per_min = 600, duration_ms = [1, 2], level_db = 60 }
[noise.motion]
motion = { rate_per_min = 600, duration_ms = [10, 60000], level_db = 60, max_frequency_hz = 100 }
[noise.motion_clip]
motion = { rate_per_min = 60, clip = true, peak_fs = 100 }
[noise.hum]
hum = { frequency_hz = 60, harmonics = 7, harmonic_step_db = 0, level_db = 60, drift = 0.95, drift_period_s = 0.5 }
[noise.dropout]
dropout = { rate_per_min = 600, duration_ms = [10, 60000], depth_db = -120 }
sensor_white = { level_db = -60 }  # dropout alone adds nothing to scale to an SNR
[noise.recording]
recording = { file = "hiss.wav", level_db = 60, loop = true, random_offset = true }
[noise.recording_once]
recording = { file = "hiss.wav", loop = false, random_offset = false }
[noise.everything]
sensor_white = { level_db = -60 }
ambient = { color = "white", level_db = 0 }
breath = { level_db = 10 }
friction = { rate_per_min = 120 }
motion = { rate_per_min = 60 }
hum = { frequency_hz = 50, harmonics = 0 }
dropout = { rate_per_min = 60 }
recording = [{ file = "hiss.wav" }, { file = "hiss.wav", level_db = -60, loop = false }]
)";

const std::vector<std::string> kProfiles = {"white",  "pink",     "brown",     "band",           "breath",
                                            "friction", "motion", "motion_clip", "hum",          "dropout",
                                            "recording", "recording_once", "everything"};

// The state-grade corners: every state at both ends of its grade and of the resting rate.
struct Corner {
  std::string state;
  std::string grade;  // "intensity = 1", "severity = 0", ""
  double heart_rate_bpm;
};

std::vector<Corner> corners() {
  std::vector<Corner> out;
  for (double hr : {30.0, 220.0}) {
    out.push_back({"rest", "", hr});
    for (const char* g : {"intensity = 0", "intensity = 1"}) out.push_back({"exercise", g, hr});
    for (const char* s : {"lv_failure", "rv_failure", "global_failure"})
      for (const char* g : {"severity = 0", "severity = 1"}) out.push_back({s, g, hr});
  }
  return out;
}

// The other subject parameters at the low or the high end of their ranges.
std::string parameter_extremes(bool high) {
  return high ? "respiration_rate_per_min = 40\nrespiration_depth_mmhg = 20\nrsa_fraction = 0.2\n"
                "lf_fraction = 0.2\nblood_volume_ml = 8000\npr_interval_ms = 320\nlv_rv_delay_ms = 150\n"
                "chest_wall_mm = 80\nsensor_gain_db = 40\nsource_variation = 1\n"
              : "respiration_rate_per_min = 4\nrespiration_depth_mmhg = 0\nrsa_fraction = 0\nlf_fraction = 0\n"
                "blood_volume_ml = 2500\npr_interval_ms = 80\nlv_rv_delay_ms = -60\nchest_wall_mm = 3\n"
                "sensor_gain_db = -40\nsource_variation = 0\n";
}

// One recipe per sensor, each at its own sample rate, format and site set.
struct DatasetCorner {
  std::string sensor;
  int sample_rate_hz;
  std::string sample_format;
  std::string sites;
};

const std::vector<DatasetCorner> kDatasets = {
    {"acoustic_bell", 1000, "float32", R"(["mitral"])"},
    {"acoustic_diaphragm", 48000, "int16", R"(["aortic", "pulmonic", "tricuspid", "mitral"])"},
    {"electronic", 11025, "int24", R"(["tricuspid", "aortic"])"},
    {"accelerometer", 48000, "float32", R"(["pulmonic"])"},
    {"electronic", 1000, "int16", R"(["mitral", "pulmonic", "aortic"])"},
};

// Half a second of white noise at 8 kHz, for the recording profiles.
void write_noise_file(const fs::path& path) {
  SF_INFO info{};
  info.samplerate = 8000;
  info.channels = 1;
  info.format = SF_FORMAT_WAV | SF_FORMAT_PCM_16;
  SNDFILE* f = sf_open(path.c_str(), SFM_WRITE, &info);
  REQUIRE(f != nullptr);
  std::vector<float> samples(4000);
  std::uint32_t state = 12345;
  for (float& s : samples) {
    state = state * 1664525u + 1013904223u;  // a fixed LCG is enough for a noise bed
    s = static_cast<float>(state >> 8) / static_cast<float>(1u << 24) - 0.5f;
  }
  REQUIRE(sf_writef_float(f, samples.data(), static_cast<sf_count_t>(samples.size())) == 4000);
  sf_close(f);
}

std::string recipe_text(std::size_t dataset, const std::vector<Corner>& all, double long_duration_s) {
  const DatasetCorner& d = kDatasets[dataset];
  std::string text = fmt::format(
      "[dataset]\nname = \"robust{}\"\nseed = {}\nsample_rate_hz = {}\nduration_s = 2\nsites = {}\n"
      "sensor = \"{}\"\nsample_format = \"{}\"\non_record_error = \"skip\"\n",
      dataset, 1000 + dataset, d.sample_rate_hz, d.sites, d.sensor, d.sample_format);
  text += kNoiseProfiles;
  // Corners are dealt round-robin over the datasets, so each state meets several rates and sensors.
  for (std::size_t i = dataset; i < all.size(); i += kDatasets.size()) {
    const Corner& c = all[i];
    const bool high = (i / kDatasets.size()) % 2 == 1;
    text += fmt::format("\n[[population]]\nname = \"c{}\"\ncount = 1\nstate = \"{}\"\n{}\nheart_rate_bpm = {}\n{}",
                        i, c.state, c.grade, c.heart_rate_bpm, parameter_extremes(high));
    // SNR at either end, or no noise at all for every third corner.
    if (i % 3 != 2) text += fmt::format("snr_db = {}\nnoise = \"{}\"\n", high ? 80 : -20, kProfiles[i % kProfiles.size()]);
  }
  // One long record at the lowest rate (600 s, the maximum, in the main sweep).
  if (dataset == 0)
    text += fmt::format("\n[[population]]\nname = \"longest\"\ncount = 1\nstate = \"rest\"\nduration_s = {}\n"
                        "snr_db = 0\nnoise = \"everything\"\n", long_duration_s);
  return text;
}

// Labels cover the record; returns the first problem, "" if none.
std::string check_labels(const Record& r) {
  const std::size_t n = r.states.n_samples;
  const double duration_s = r.subject.params.duration_s;
  double max_rr_s = 0;
  for (const BeatRow& beat : r.beats) max_rr_s = std::max(max_rr_s, beat.rr_s);
  // Labels cover the record: one labelled span per site, S1 -> systole -> S2 -> diastole -> S1,
  // unlabelled only before the first and after the last sound (less than a cycle each).
  for (std::size_t s = 0; s < r.states.n_sites; ++s) {
    const std::uint8_t* row = r.states.row(s);
    std::size_t first = 0, last = n;
    while (first < n && row[first] == 0) ++first;
    while (last > first && row[last - 1] == 0) --last;
    const double head_s = static_cast<double>(first) / r.sample_rate_hz;
    const double tail_s = static_cast<double>(n - last) / r.sample_rate_hz;
    const double allowed_s = max_rr_s + 0.5;  // a cycle plus the longest sound
    if (first == n) {
      if (duration_s > allowed_s) return fmt::format("site {}: no sample labelled", s);
      continue;
    }
    if (head_s > allowed_s || tail_s > allowed_s)
      return fmt::format("site {}: {} s unlabelled at the start, {} s at the end", s, head_s, tail_s);
    for (std::size_t k = first + 1; k < last; ++k) {
      if (row[k] == row[k - 1]) continue;
      if (row[k] == 0) return fmt::format("site {}: unlabelled gap at sample {}", s, k);
      const int from = row[k - 1], to = row[k];
      // The four-state cycle goes forward by one state, or by two where the one between has no
      // sample: S1 right after S2 (diastole shorter than a sample) or S2 right after S1, and
      // systole -> diastole (or back) at a valve closure where the sound between is missing.
      const int step = (to - from + 4) % 4;
      const bool next_in_cycle = step == 1 || step == 2;
      if (!next_in_cycle) return fmt::format("site {}: label {} followed by {} at sample {}", s, from, to, k);
    }
  }
  return "";
}

// The checks of one synthesised record but its labels; returns the first inconsistency, "" if none.
std::string check_record(const Record& r) {
  const std::size_t n = r.pcg.n_samples;
  const double duration_s = r.subject.params.duration_s;
  const auto expected = static_cast<std::size_t>(std::llround(duration_s * r.sample_rate_hz));
  if (r.sample_rate_hz != r.subject.sample_rate_hz) return "sample rate differs from the subject's";
  if (n != expected) return fmt::format("{} samples, expected {}", n, expected);
  if (r.pcg.n_sites != r.sites.size() || r.pcg_clean.n_sites != r.sites.size() || r.states.n_sites != r.sites.size())
    return "site axis differs from the sites";
  if (r.pcg_clean.n_samples != n || r.states.n_samples != n) return "pcg_clean or states length differs from pcg";
  for (std::size_t i = 0; i < r.pcg.data.size(); ++i)
    if (!std::isfinite(r.pcg.data[i]) || !std::isfinite(r.pcg_clean.data[i]))
      return fmt::format("non-finite sample at flat index {}", i);
  for (std::uint8_t label : r.states.data)
    if (label > static_cast<std::uint8_t>(Label::diastole)) return fmt::format("label value {}", label);

  double previous_onset_s = -1;
  for (const Event& e : r.events) {
    const std::string what = fmt::format("event {} of beat {} at site {}", name(e.kind), e.beat, e.site);
    if (!(e.onset_s <= e.peak_s && e.peak_s <= e.offset_s)) return what + ": onset <= peak <= offset violated";
    if (e.onset_s < 0 || !(e.offset_s < duration_s)) return what + ": outside the record";
    if (e.onset_s < previous_onset_s) return what + ": events not ordered by onset";
    previous_onset_s = e.onset_s;
    for (auto [t, k] : {std::pair{e.onset_s, e.onset_index}, {e.peak_s, e.peak_index}, {e.offset_s, e.offset_index}})
      if (k != std::llround(t * r.sample_rate_hz)) return what + ": sample index does not match seconds";
    if (e.site < -1 || e.site >= static_cast<std::int32_t>(r.sites.size())) return what + ": site out of range";
  }
  double previous_activation_s = -1e9;
  for (std::size_t b = 0; b < r.beats.size(); ++b) {
    const BeatRow& beat = r.beats[b];
    if (!(beat.rr_s > 0) || !std::isfinite(beat.lv_stroke_volume_ml)) return fmt::format("beat {}: rr or stroke volume", b);
    if (!(beat.activation_s > previous_activation_s)) return fmt::format("beat {}: activation not increasing", b);
    if (!(beat.resp_phase >= 0 && beat.resp_phase < 1)) return fmt::format("beat {}: resp_phase {}", b, beat.resp_phase);
    previous_activation_s = beat.activation_s;
  }
  for (const Artifact& a : r.artifacts)
    if (!(a.onset_s >= 0 && a.onset_s <= a.offset_s && a.offset_s <= duration_s + 1e-9))
      return fmt::format("artifact {} [{}, {}] outside the record or reversed", a.kind, a.onset_s, a.offset_s);

  if (!(r.summary.heart_rate_bpm > 0) || !std::isfinite(r.summary.cardiac_output_l_min))
    return "record summary not finite";
  // +inf is possible: a profile of event processes only (motion with clip) that drew no event.
  if (r.subject.params.snr_db && r.subject.noise_profile && std::isnan(r.summary.snr_achieved_db))
    return "achieved SNR is NaN";
  return "";
}

bool high_rate(const SubjectSpec& s) { return s.params.heart_rate_bpm.value_or(0) >= 200; }

// Synthesises every record of the recipe (or only those from 200 bpm); each must pass the checks
// or be a RecordFailure.
std::size_t sweep_recipe(const fs::path& path, const std::string& label, bool only_high_rate) {
  const recipe::Recipe recipe = recipe::load_recipe(path.string());
  std::size_t tried = 0;
  for (std::uint64_t i = 0; i < recipe::record_count(recipe); ++i, ++tried) {
    const SubjectSpec subject = recipe::plan_record(recipe, i);
    if (only_high_rate && !high_rate(subject)) continue;
    INFO(fmt::format("{}, record {} population {} state {} hr {} snr {}", label, subject.record_id,
                     subject.population, name(subject.state), subject.params.heart_rate_bpm.value_or(-1),
                     subject.params.snr_db.value_or(NAN)));
    try {
      const Record r = gen::synthesize_record(subject);
      CHECK(check_record(r) == "");
      CHECK(check_labels(r) == "");
    } catch (const RecordFailure& e) {
      // A record that cannot be made must say which one and why.
      CHECK(e.record_id() == subject.record_id);
      CHECK(std::string(e.what()).size() > subject.record_id.size() + 10);
      WARN("record failure: " << e.what());
    }
  }
  return tried;
}

}  // namespace

TEST_CASE("every corner of the parameter box gives a consistent record or a clear record failure", "[robustness]") {
  test::TempDir dir;
  write_noise_file(dir.path() / "hiss.wav");
  const std::vector<Corner> all = corners();
  std::size_t tried = 0;
  for (std::size_t d = 0; d < kDatasets.size(); ++d) {
    const fs::path path = dir.path() / fmt::format("robust{}.toml", d);
    std::ofstream(path) << recipe_text(d, all, /*long_duration_s=*/600);
    tried += sweep_recipe(path, fmt::format("dataset {} ({} at {} Hz)", d, kDatasets[d].sensor,
                                            kDatasets[d].sample_rate_hz), /*only_high_rate=*/false);
  }
  // Every corner was tried, plus the 600 s record.
  CHECK(tried == all.size() + 1);
}

// At 220 bpm (with or without state effects) S2 of one beat and S1 of the next overlap or come
// out of order; the labels follow the cycle beat by beat (generator/truth/labels.hpp) and must
// still cover the record. 30 s records, so that every phase of the breath and RR variation occurs.
TEST_CASE("labels cover the record at 220 bpm", "[robustness]") {
  test::TempDir dir;
  write_noise_file(dir.path() / "hiss.wav");
  const std::vector<Corner> all = corners();
  for (std::size_t d = 0; d < kDatasets.size(); ++d) {
    const fs::path path = dir.path() / fmt::format("robust{}.toml", d);
    std::ofstream(path) << recipe_text(d, all, /*long_duration_s=*/30);
    sweep_recipe(path, fmt::format("dataset {}", d), /*only_high_rate=*/true);
  }
}
