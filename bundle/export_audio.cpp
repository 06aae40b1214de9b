#include "bundle/export_audio.hpp"

#include <sndfile.h>

#include <cmath>
#include <memory>
#include <vector>

#include <fmt/format.h>

#include "core/error.hpp"

namespace stethogen::bundle {

std::optional<AudioContainer> parse_audio_container(std::string_view s) {
  if (s == "wav") return AudioContainer::wav;
  if (s == "flac") return AudioContainer::flac;
  return std::nullopt;
}

std::optional<AudioEncoding> parse_audio_encoding(std::string_view s) {
  if (s == "16") return AudioEncoding::pcm16;
  if (s == "24") return AudioEncoding::pcm24;
  if (s == "float") return AudioEncoding::float32;
  return std::nullopt;
}

std::string_view extension(AudioContainer c) { return c == AudioContainer::wav ? "wav" : "flac"; }

void check_audio_combination(AudioContainer c, AudioEncoding e) {
  if (c == AudioContainer::flac && e == AudioEncoding::float32)
    throw InputError("--bits float with --format flac: FLAC stores integer samples only; "
                     "use --bits 16 or 24, or --format wav for float samples");
}

namespace {

int bits_of(AudioEncoding e) { return e == AudioEncoding::pcm16 ? 16 : 24; }

int sndfile_format(AudioContainer c, AudioEncoding e) {
  int major = c == AudioContainer::wav ? SF_FORMAT_WAV : SF_FORMAT_FLAC;
  switch (e) {
    case AudioEncoding::pcm16: return major | SF_FORMAT_PCM_16;
    case AudioEncoding::pcm24: return major | SF_FORMAT_PCM_24;
    case AudioEncoding::float32: return major | SF_FORMAT_FLOAT;
  }
  return major;
}

struct SndfileCloser {
  void operator()(SNDFILE* f) const { sf_close(f); }
};

}  // namespace

double integer_full_scale(AudioEncoding e) { return std::ldexp(1.0, bits_of(e) - 1); }

std::int32_t quantise_left_aligned(float x, AudioEncoding e, bool* clipped) {
  const int bits = bits_of(e);
  const double full_scale = integer_full_scale(e);
  double q = std::nearbyint(static_cast<double>(x) * full_scale);  // round half to even
  const double lo = -full_scale, hi = full_scale - 1;
  *clipped = q < lo || q > hi;
  q = std::fmin(std::fmax(q, lo), hi);
  // Left-align into 32 bits: libsndfile keeps the top `bits` bits of an sf_write_int value.
  return static_cast<std::int32_t>(static_cast<std::uint32_t>(static_cast<std::int32_t>(q)) << (32 - bits));
}

AudioWriteResult write_mono_audio(const std::filesystem::path& path, const float* samples, std::size_t n,
                                  int sample_rate_hz, AudioContainer container, AudioEncoding encoding) {
  check_audio_combination(container, encoding);
  if (sample_rate_hz <= 0) throw InputError(fmt::format("{}: sample rate {} Hz: must be > 0", path.string(), sample_rate_hz));
  for (std::size_t k = 0; k < n; ++k)
    if (!std::isfinite(samples[k]))
      throw InputError(fmt::format("{}: sample {} is {}: audio samples must be finite", path.string(), k, samples[k]));

  SF_INFO info{};
  info.samplerate = sample_rate_hz;
  info.channels = 1;
  info.format = sndfile_format(container, encoding);
  if (!sf_format_check(&info))
    throw InputError(fmt::format("{}: libsndfile cannot write {} at {} Hz with this encoding", path.string(),
                                 extension(container), sample_rate_hz));
  std::unique_ptr<SNDFILE, SndfileCloser> file(sf_open(path.c_str(), SFM_WRITE, &info));
  if (!file) throw RuntimeFailure(fmt::format("cannot create {}: {}", path.string(), sf_strerror(nullptr)));

  AudioWriteResult result;
  sf_count_t written = 0;
  if (encoding == AudioEncoding::float32) {
    written = sf_write_float(file.get(), samples, static_cast<sf_count_t>(n));
  } else {
    std::vector<int> ints(n);
    for (std::size_t k = 0; k < n; ++k) {
      bool clipped = false;
      ints[k] = quantise_left_aligned(samples[k], encoding, &clipped);
      result.clipped_samples += clipped ? 1 : 0;
    }
    written = sf_write_int(file.get(), ints.data(), static_cast<sf_count_t>(n));
  }
  if (written != static_cast<sf_count_t>(n))
    throw RuntimeFailure(fmt::format("writing {} failed after {} of {} samples: {}", path.string(), written, n,
                                     sf_strerror(file.get())));
  SNDFILE* raw = file.release();
  if (int rc = sf_close(raw); rc != 0)
    throw RuntimeFailure(fmt::format("closing {} failed: {}", path.string(), sf_error_number(rc)));
  return result;
}

}  // namespace stethogen::bundle
