#include "noise/recording.hpp"

#include <cmath>
#include <filesystem>
#include <map>
#include <mutex>

#include <fmt/format.h>
#include <sndfile.h>
#include <soxr.h>

#include "core/error.hpp"

namespace stethogen::noise {

struct ResampleCache {
  std::mutex mutex;
  std::map<int, std::shared_ptr<const std::vector<float>>> by_rate;
};

namespace {

// Peak below this (about -120 dB full scale) counts as silent: it cannot be scaled to an SNR.
constexpr double kSilentPeak = 1e-6;
// Decoded files are held in memory for the whole run: refuse more than this many frames
// (about 25 minutes at 44.1 kHz, 256 MB as float).
constexpr sf_count_t kMaxFrames = sf_count_t{1} << 26;

struct SndfileCloser {
  void operator()(SNDFILE* f) const { sf_close(f); }
};

}  // namespace

RecordingAudio load_recording(const std::string& path) {
  std::error_code ec;
  if (!std::filesystem::exists(path, ec))
    throw InputError(fmt::format("noise file {} does not exist", path));
  if (std::filesystem::is_directory(path, ec))
    throw InputError(fmt::format("noise file {} is a directory", path));
  SF_INFO info{};
  std::unique_ptr<SNDFILE, SndfileCloser> file(sf_open(path.c_str(), SFM_READ, &info));
  if (!file)
    throw InputError(fmt::format("noise file {} cannot be read as audio ({}); use WAV, FLAC or OGG", path,
                                 sf_strerror(nullptr)));
  int major = info.format & SF_FORMAT_TYPEMASK;
  if (major != SF_FORMAT_WAV && major != SF_FORMAT_WAVEX && major != SF_FORMAT_RF64 && major != SF_FORMAT_FLAC &&
      major != SF_FORMAT_OGG)
    throw InputError(fmt::format("noise file {} is not WAV, FLAC or OGG", path));
  if (info.frames <= 0 || info.channels <= 0) throw InputError(fmt::format("noise file {} is empty", path));
  if (info.samplerate <= 0) throw InputError(fmt::format("noise file {} has no valid sample rate", path));
  if (info.frames > kMaxFrames)
    throw InputError(fmt::format("noise file {} is too long ({} frames; at most {}): cut it to a few minutes", path,
                                 info.frames, kMaxFrames));

  RecordingAudio audio;
  audio.path = path;
  audio.sample_rate_hz = info.samplerate;
  audio.samples.reserve(static_cast<std::size_t>(info.frames));
  constexpr sf_count_t kChunkFrames = 4096;
  std::vector<float> chunk(static_cast<std::size_t>(kChunkFrames) * info.channels);
  double peak = 0;
  while (true) {
    sf_count_t got = sf_readf_float(file.get(), chunk.data(), kChunkFrames);
    if (got <= 0) break;
    for (sf_count_t i = 0; i < got; ++i) {
      double sum = 0;
      for (int c = 0; c < info.channels; ++c) sum += chunk[i * info.channels + c];
      double v = sum / info.channels;
      if (!std::isfinite(v)) throw InputError(fmt::format("noise file {} contains non-finite samples", path));
      peak = std::max(peak, std::abs(v));
      audio.samples.push_back(static_cast<float>(v));
    }
  }
  if (audio.samples.empty())
    throw InputError(fmt::format("noise file {} could not be decoded: {}", path, sf_strerror(file.get())));
  if (peak < kSilentPeak)
    throw InputError(fmt::format("noise file {} is silent (peak below -120 dB full scale)", path));
  audio.cache = std::make_shared<ResampleCache>();
  return audio;
}

std::shared_ptr<const std::vector<float>> resampled(const RecordingAudio& audio, int rate_hz) {
  std::lock_guard lock(audio.cache->mutex);
  auto& slot = audio.cache->by_rate[rate_hz];
  if (slot) return slot;
  if (rate_hz == audio.sample_rate_hz) {
    slot = std::make_shared<const std::vector<float>>(audio.samples);
    return slot;
  }
  const double ratio = static_cast<double>(rate_hz) / audio.sample_rate_hz;
  std::vector<float> out(static_cast<std::size_t>(std::ceil(audio.samples.size() * ratio)) + 1);
  std::size_t done = 0;
  soxr_io_spec_t io = soxr_io_spec(SOXR_FLOAT32_I, SOXR_FLOAT32_I);
  soxr_quality_spec_t quality = soxr_quality_spec(SOXR_HQ, 0);
  soxr_error_t err = soxr_oneshot(audio.sample_rate_hz, rate_hz, 1, audio.samples.data(), audio.samples.size(),
                                  nullptr, out.data(), out.size(), &done, &io, &quality, nullptr);
  if (err) throw RuntimeFailure(fmt::format("resampling {} to {} Hz failed: {}", audio.path, rate_hz, err));
  out.resize(done);
  if (out.empty()) throw InputError(fmt::format("noise file {} is too short to resample to {} Hz", audio.path, rate_hz));
  slot = std::make_shared<const std::vector<float>>(std::move(out));
  return slot;
}

}  // namespace stethogen::noise
