// User-supplied noise recordings: decoding, resampling against scipy, looping, and bad files.
#include <catch2/catch.hpp>

#include <cmath>
#include <fstream>

#include <fmt/format.h>
#include <sndfile.h>
#include <toml++/toml.h>

#include "core/error.hpp"
#include "noise/recording.hpp"
#include "noise_helpers.hpp"

using namespace stethogen;
using namespace noise_test;

namespace {

void write_audio(const std::string& path, int rate_hz, const std::vector<float>& interleaved, int channels,
                 int format) {
  SF_INFO info{};
  info.samplerate = rate_hz;
  info.channels = channels;
  info.format = format;
  SNDFILE* f = sf_open(path.c_str(), SFM_WRITE, &info);
  REQUIRE(f != nullptr);
  sf_writef_float(f, interleaved.data(), static_cast<sf_count_t>(interleaved.size() / channels));
  sf_close(f);
}

// Tones well inside both rates' pass bands, with a slow level change.
std::vector<float> test_tones(int rate_hz, double duration_s) {
  std::vector<float> x(static_cast<std::size_t>(duration_s * rate_hz));
  for (std::size_t i = 0; i < x.size(); ++i) {
    double t = static_cast<double>(i) / rate_hz;
    x[i] = static_cast<float>((0.3 + 0.1 * std::sin(2 * M_PI * 0.7 * t)) *
                              (std::sin(2 * M_PI * 150 * t) + 0.5 * std::sin(2 * M_PI * 440 * t + 1) +
                               0.25 * std::sin(2 * M_PI * 910 * t + 2)));
  }
  return x;
}

noise::NoiseProfile parse_in(const TempDir& dir, const std::string& body) {
  const std::string recipe = dir.file("recipe.toml");
  std::ofstream(recipe) << "[noise.clinic]\n" << body << "\n";
  toml::table doc = toml::parse_file(recipe);
  return noise::parse_noise_profile(*doc["noise"]["clinic"].as_table(), "noise.clinic", recipe);
}

std::string error_of(const TempDir& dir, const std::string& body) {
  try {
    parse_in(dir, body);
  } catch (const InputError& e) {
    return e.what();
  }
  return "no error";
}

}  // namespace

TEST_CASE("a 44.1 kHz recording mixed into a 4 kHz record agrees with scipy.signal.resample_poly") {
  TempDir dir;
  std::filesystem::create_directories(dir.file("sounds"));
  write_audio(dir.file("sounds/room.wav"), 44100, test_tones(44100, 3.0), 1, SF_FORMAT_WAV | SF_FORMAT_FLOAT);
  // Relative to the recipe's folder.
  auto profile = parse_in(dir, "recording = { file = \"sounds/room.wav\", loop = false, random_offset = false }");
  REQUIRE(profile.recordings.size() == 1);
  CHECK(profile.recordings[0].audio->sample_rate_hz == 44100);
  Case c = make_case(profile, 0, 2.5, 1);
  auto out = c.run();
  CHECK(out.stationary == std::vector<std::string>{"recording:sounds/room.wav"});
  write_f32(dir.file("noise.f32"), noise_at(out, c.clean, 0));
  // scipy.signal.resample_poly(x, 40, 441) of the same file read by soundfile: error power at
  // most -60 dB (the bound), 25 ms at each end left out (filter edge transients).
  auto m = reference(fmt::format("resample {} {} 40 441 100", dir.file("sounds/room.wav"), dir.file("noise.f32")));
  CHECK(m["error_power_db"] < -60);
}

TEST_CASE("recordings loop, start at a random offset, and FLAC, OGG and stereo files decode") {
  TempDir dir;
  std::vector<float> tones = test_tones(8000, 1.0);
  write_audio(dir.file("short.flac"), 8000, tones, 1, SF_FORMAT_FLAC | SF_FORMAT_PCM_16);
  std::vector<float> stereo;
  for (float v : tones) {
    stereo.push_back(v);
    stereo.push_back(0.5f * v);
  }
  write_audio(dir.file("stereo.ogg"), 8000, stereo, 2, SF_FORMAT_OGG | SF_FORMAT_VORBIS);
  auto flac = noise::load_recording(dir.file("short.flac"));
  CHECK(flac.samples.size() == tones.size());
  // FLAC at 16 bits: quantisation step 2^-15 (format definition).
  CHECK(flac.samples[1234] == Approx(tones[1234]).margin(1.0 / 32768));
  auto ogg = noise::load_recording(dir.file("stereo.ogg"));
  CHECK(ogg.sample_rate_hz == 8000);

  auto profile = parse_in(dir, "recording = { file = \"short.flac\" }");
  Case c = make_case(profile, 0, 3.5, 2);
  auto out = c.run();
  // One second of audio at 4 kHz repeats every 4000 samples when looped.
  auto x = noise_at(out, c.clean, 0);
  CHECK(x[100] == Approx(x[4100]).margin(1e-5));
  CHECK(x[2000] == Approx(x[10000]).margin(1e-5));
  Case other = make_case(profile, 0, 3.5, 2, 4000, 99);
  auto y = noise_at(other.run(), other.clean, 0);
  CHECK(std::abs(x[100] - y[100]) + std::abs(x[200] - y[200]) > 1e-4);  // another offset
}

TEST_CASE("bad noise files are refused at parse time naming the file and the key") {
  TempDir dir;
  std::filesystem::create_directories(dir.file("folder.wav"));
  std::ofstream(dir.file("garbage.wav")) << "this is not audio at all, just text pretending to be a WAV file";
  write_audio(dir.file("empty.wav"), 8000, {}, 1, SF_FORMAT_WAV | SF_FORMAT_PCM_16);
  write_audio(dir.file("silent.wav"), 8000, std::vector<float>(8000, 0.0f), 1, SF_FORMAT_WAV | SF_FORMAT_PCM_16);
  write_audio(dir.file("other.aiff"), 8000, test_tones(8000, 0.5), 1, SF_FORMAT_AIFF | SF_FORMAT_PCM_16);
  struct Bad {
    std::string file, message;
  };
  for (const Bad& bad : {Bad{"missing.wav", "does not exist"}, Bad{"folder.wav", "is a directory"},
                         Bad{"garbage.wav", "cannot be read as audio"}, Bad{"empty.wav", "is empty"},
                         Bad{"silent.wav", "is silent"}, Bad{"other.aiff", "is not WAV, FLAC or OGG"}}) {
    std::string e = error_of(dir, "recording = { file = \"" + bad.file + "\" }");
    INFO(e);
    CHECK_THAT(e, Catch::StartsWith(dir.file("recipe.toml") + ":2:22: noise.clinic.recording.file = \"" + bad.file));
    CHECK_THAT(e, Catch::Contains(dir.file(bad.file)));
    CHECK_THAT(e, Catch::Contains(bad.message));
  }
  CHECK_THAT(error_of(dir, "recording = { level_db = 3 }"), Catch::Contains("noise.clinic.recording.file: missing"));
  CHECK_THAT(error_of(dir, "recording = [{ file = \"missing.wav\" }]"),
             Catch::Contains("noise.clinic.recording[0].file = \"missing.wav\""));
}
