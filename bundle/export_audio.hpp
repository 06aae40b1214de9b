// One site of one record as an audio file through libsndfile (WAV or FLAC).
//
// Quantisation (integer encodings): pcg full scale 1.0 maps to integer full scale 2^(bits-1),
// i.e. q = round(x * 2^(bits-1)) clipped to [-2^(bits-1), 2^(bits-1) - 1]. This is the inverse
// of the usual reading convention (libsndfile, soundfile: x = q / 2^(bits-1)), so a sample
// read back differs from the bundle by at most half an LSB unless it was clipped; samples at
// or beyond +-1.0 are clipped and counted. Float encoding stores float32 unchanged.
#pragma once

#include <cstddef>
#include <cstdint>
#include <filesystem>
#include <optional>
#include <string_view>

namespace stethogen::bundle {

enum class AudioContainer : std::uint8_t { wav, flac };
enum class AudioEncoding : std::uint8_t { pcm16, pcm24, float32 };

std::optional<AudioContainer> parse_audio_container(std::string_view s);  // "wav", "flac"
std::optional<AudioEncoding> parse_audio_encoding(std::string_view s);    // "16", "24", "float"
std::string_view extension(AudioContainer c);                             // "wav", "flac"

// Throws InputError for a combination the container cannot store (FLAC holds integers only).
void check_audio_combination(AudioContainer c, AudioEncoding e);

// Integer full scale 2^(bits-1) of an integer encoding.
double integer_full_scale(AudioEncoding e);

// q = round(x * full scale), clipped to the encoding's range; the 32-bit left-aligned value
// libsndfile expects from sf_write_int. Sets *clipped when the value was clipped.
std::int32_t quantise_left_aligned(float x, AudioEncoding e, bool* clipped);

struct AudioWriteResult {
  std::size_t clipped_samples = 0;
};

// Writes a mono file at path (replacing it) from n samples at sample_rate_hz. Throws
// InputError for non-finite samples, RuntimeFailure when libsndfile fails.
AudioWriteResult write_mono_audio(const std::filesystem::path& path, const float* samples, std::size_t n,
                                  int sample_rate_hz, AudioContainer container, AudioEncoding encoding);

}  // namespace stethogen::bundle
