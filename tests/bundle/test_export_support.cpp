#include "test_export_support.hpp"

#include <unistd.h>

#include <array>
#include <cmath>
#include <cstdio>
#include <stdexcept>

#include <fmt/format.h>

#include "core/random.hpp"

namespace stethogen::test {
namespace fs = std::filesystem;

ScratchDir::ScratchDir(const std::string& tag) {
  static int counter = 0;
  path_ = fs::temp_directory_path() / fmt::format("stethogen-test-{}-{}-{}", tag, ::getpid(), counter++);
  fs::remove_all(path_);
  fs::create_directories(path_);
}

ScratchDir::~ScratchDir() {
  std::error_code ignored;
  fs::remove_all(path_, ignored);
}

std::string env_or(const char* name, const std::string& fallback) {
  const char* v = std::getenv(name);
  return v && *v ? std::string(v) : fallback;
}

std::string shell_quote(const std::string& s) {
  std::string out = "'";
  for (char c : s) out += c == '\'' ? std::string("'\\''") : std::string(1, c);
  return out + "'";
}

ProcessResult run_command(const std::string& command_line) {
  ProcessResult result;
  FILE* pipe = ::popen((command_line + " 2>&1").c_str(), "r");
  if (!pipe) return result;
  std::array<char, 4096> buffer{};
  while (std::size_t n = std::fread(buffer.data(), 1, buffer.size(), pipe)) result.output.append(buffer.data(), n);
  int status = ::pclose(pipe);
  result.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  return result;
}

ProcessResult run_python(const ScratchDir& dir, const std::string& name, const std::string& script,
                         const std::vector<std::string>& args) {
  const fs::path path = dir / name;
  std::ofstream(path) << script;
  std::string command = shell_quote(env_or("STETHOGEN_PYTHON", "/usr/bin/python3"));
  command += ' ';
  command += shell_quote(path.string());
  for (const std::string& a : args) {
    command += ' ';
    command += shell_quote(a);
  }
  return run_command(command);
}

std::string tiny_recipe(const std::string& extra_noise) {
  return R"TOML([dataset]
name = "tiny"
seed = 11
sample_rate_hz = 2000
duration_s = 3
sites = ["aortic", "mitral"]
sensor = "electronic"

[noise.room]
sensor_white = { level_db = -12 }
ambient = { color = "pink", level_db = -6 }
friction = { rate_per_min = 20, duration_ms = [30, 150], level_db = 6 }
)TOML" + extra_noise + R"TOML(

[[population]]
name = "calm"
count = 2
state = "rest"
snr_db = { uniform = [10, 20] }
noise = "room"

[[population]]
name = "weak"
count = 2
state = "lv_failure"
severity = 0.6
snr_db = { uniform = [0, 10] }
noise = "room"
)TOML";
}

ProcessResult run_stethogen(const std::vector<std::string>& args) {
  std::string command = shell_quote(env_or("STETHOGEN_BINARY", "stethogen"));
  for (const std::string& a : args) {
    command += ' ';
    command += shell_quote(a);
  }
  return run_command(command);
}

ProcessResult generate_bundle(const ScratchDir& dir, const std::string& name, const std::string& recipe_text) {
  const fs::path recipe = dir / (name + ".toml");
  std::ofstream(recipe) << recipe_text;
  return run_stethogen({"generate", recipe.string(), "-o", (dir / (name + ".h5")).string(), "--quiet"});
}

const fs::path& shared_tiny_bundle() {
  static ScratchDir dir("shared");
  static const fs::path path = [] {
    ProcessResult r = generate_bundle(dir, "tiny", tiny_recipe());
    if (r.exit_code != 0) throw std::runtime_error("generating the shared test bundle failed: " + r.output);
    return dir / "tiny.h5";
  }();
  return path;
}

void write_raw_f32(const fs::path& path, const std::vector<float>& values) {
  std::ofstream out(path, std::ios::binary);
  out.write(reinterpret_cast<const char*>(values.data()), static_cast<std::streamsize>(values.size() * sizeof(float)));
}

Record make_test_record(std::uint64_t index, int rate_hz, double duration_s, std::vector<Site> sites) {
  Record r;
  RandomStream rng(7, index, Stream::noise_base);
  const auto n = static_cast<std::size_t>(std::llround(duration_s * rate_hz));
  r.subject.dataset_seed = 7;
  r.subject.record_index = index;
  r.subject.record_id = fmt::format("r{:06d}", index);
  r.subject.population = index % 2 == 0 ? "calm" : "brisk";
  r.subject.state = index % 2 == 0 ? State::rest : State::exercise;
  r.subject.exercise_intensity = index % 2 == 0 ? 0.0 : 0.5;
  r.subject.sample_rate_hz = rate_hz;
  r.subject.sites = sites;
  r.subject.params.duration_s = duration_s;
  r.subject.params.snr_db = 10.0 + static_cast<double>(index);
  r.sample_rate_hz = rate_hz;
  r.sites = sites;
  r.pcg = SiteArray<float>(sites.size(), n);
  r.pcg_clean = SiteArray<float>(sites.size(), n);
  r.states = SiteArray<std::uint8_t>(sites.size(), n);
  const double beat_s = 0.8;
  for (std::size_t s = 0; s < sites.size(); ++s)
    for (std::size_t k = 0; k < n; ++k) {
      const double t = static_cast<double>(k) / rate_hz;
      const double clean = 0.5 * std::sin(2 * M_PI * 40.0 * t) * std::exp(-std::fmod(t, beat_s) * 8.0);
      r.pcg_clean.at(s, k) = static_cast<float>(clean);
      r.pcg.at(s, k) = static_cast<float>(clean + 0.05 * rng.normal());
      const double phase = std::fmod(t + 0.01 * static_cast<double>(s), beat_s) / beat_s;
      r.states.at(s, k) = t < 0.05 ? 0 : phase < 0.15 ? 1 : phase < 0.45 ? 2 : phase < 0.6 ? 3 : 4;
    }
  // Push a few samples beyond full scale so clipping is exercised.
  r.pcg.at(0, n / 2) = 1.25f;
  r.pcg.at(0, n / 2 + 1) = -1.5f;
  int beat = 0;
  for (double t0 = 0.1; t0 + 0.5 < duration_s; t0 += beat_s, ++beat) {
    auto idx = [&](double t) { return static_cast<std::int64_t>(std::llround(t * rate_hz)); };
    r.events.push_back({beat, EventKind::M1, -1, t0, t0 + 0.01, t0 + 0.03, idx(t0), idx(t0 + 0.01), idx(t0 + 0.03)});
    r.events.push_back({beat, EventKind::M1, 0, t0 + 0.002, t0 + 0.012, t0 + 0.032, idx(t0 + 0.002),
                        idx(t0 + 0.012), idx(t0 + 0.032)});
    r.events.push_back({beat, EventKind::A2, -1, t0 + 0.35, t0 + 0.36, t0 + 0.39, idx(t0 + 0.35), idx(t0 + 0.36),
                        idx(t0 + 0.39)});
    r.events.push_back({beat, EventKind::aortic_close, -1, t0 + 0.345, t0 + 0.345, t0 + 0.345, idx(t0 + 0.345),
                        idx(t0 + 0.345), idx(t0 + 0.345)});
    BeatRow b;
    b.beat = beat;
    b.activation_s = t0 - 0.05;
    b.rr_s = beat_s;
    b.resp_phase = std::fmod(0.2 * beat, 1.0);
    b.inspiration = b.resp_phase < 0.4 ? 1 : 0;
    b.lv_stroke_volume_ml = 70 + beat;
    b.lv_dpdt_max_mmhg_s = 1500 + 10 * beat;
    b.a2p2_split_ms = 20 + 5 * beat;
    b.s1_amplitude = 0.4;
    b.s2_amplitude = 0.3;
    r.beats.push_back(b);
  }
  r.artifacts.push_back({"friction", 0, 0.5, 0.6, 6.0});
  r.artifacts.push_back({"hum", -1, 0.0, duration_s, -6.0});
  r.hemodynamics.sample_rate_hz = 100;
  r.hemodynamics.names = {"lv_pressure"};
  r.hemodynamics.units = {"mmHg"};
  r.hemodynamics.data = SiteArray<float>(1, static_cast<std::size_t>(duration_s * 100));
  for (std::size_t k = 0; k < r.hemodynamics.data.n_samples; ++k)
    r.hemodynamics.data.at(0, k) = static_cast<float>(60 + 50 * std::sin(k * 0.08));
  r.summary.heart_rate_bpm = 60.0 / beat_s;
  r.summary.cardiac_output_l_min = 5.2;
  r.summary.lv_ejection_fraction = 0.62;
  r.summary.rv_ejection_fraction = 0.55;
  r.summary.snr_target_db = *r.subject.params.snr_db;
  r.summary.snr_achieved_db = *r.subject.params.snr_db + 0.01;
  return r;
}

}  // namespace stethogen::test
