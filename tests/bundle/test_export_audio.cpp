// Audio export through libsndfile, read back by the general-purpose soundfile library.
#include <catch2/catch.hpp>

#include <cmath>

#include "bundle/export_audio.hpp"
#include "core/error.hpp"
#include "core/random.hpp"
#include "test_export_support.hpp"

using namespace stethogen;
using namespace stethogen::bundle;

namespace {

// Reads AUDIO with soundfile and compares it with the raw float32 samples RAW: within half an
// LSB of x = q / 2^(bits-1) (the reading convention of libsndfile and soundfile) for samples
// inside full scale, at the clip limits outside; bit-identical for float.
const char* kCompareScript = R"PY(
import sys
import numpy as np
import soundfile as sf
audio, raw, bits, rate = sys.argv[1], sys.argv[2], sys.argv[3], int(sys.argv[4])
info = sf.info(audio)
want_subtype = {"16": "PCM_16", "24": "PCM_24", "float": "FLOAT"}[bits]
assert info.samplerate == rate, (info.samplerate, rate)
assert info.channels == 1, info.channels
assert info.subtype == want_subtype, (info.subtype, want_subtype)
x = np.fromfile(raw, dtype="<f4").astype(np.float64)
if bits == "float":
    y, _ = sf.read(audio, dtype="float32")
    assert len(y) == len(x)
    assert np.array_equal(y.astype(np.float64), x), "float samples differ"
else:
    y, _ = sf.read(audio, dtype="float64")
    assert len(y) == len(x)
    fs = 2.0 ** (int(bits) - 1)
    inside = (x * fs >= -fs) & (x * fs <= fs - 1)
    err = np.abs(y[inside] - x[inside])
    assert err.max() <= 0.5 / fs * (1 + 1e-9), ("error beyond half an LSB", err.max() * fs)
    assert np.all(y[~inside] == np.where(x[~inside] > 0, (fs - 1) / fs, -1.0)), "clipped samples"
print("ok", len(x))
)PY";

std::vector<float> test_signal(std::size_t n) {
  RandomStream rng(3, 0, 1);
  std::vector<float> x(n);
  for (std::size_t k = 0; k < n; ++k) x[k] = static_cast<float>(0.7 * std::sin(0.01 * k) + 0.05 * rng.normal());
  x[10] = 1.0f;    // exactly full scale: clipped to the largest positive integer
  x[11] = -1.0f;   // exactly negative full scale: representable
  x[12] = 2.5f;    // beyond: clipped
  x[13] = -3.0f;
  return x;
}

}  // namespace

TEST_CASE("exported WAV and FLAC read back within half an LSB", "[export]") {
  test::ScratchDir dir("audio");
  const std::vector<float> x = test_signal(5000);
  test::write_raw_f32(dir / "x.f32", x);
  struct Case {
    AudioContainer container;
    AudioEncoding encoding;
    const char* bits;
    std::size_t clipped;
  };
  const Case cases[] = {
      {AudioContainer::wav, AudioEncoding::pcm16, "16", 3}, {AudioContainer::wav, AudioEncoding::pcm24, "24", 3},
      {AudioContainer::wav, AudioEncoding::float32, "float", 0}, {AudioContainer::flac, AudioEncoding::pcm16, "16", 3},
      {AudioContainer::flac, AudioEncoding::pcm24, "24", 3},
  };
  for (const Case& c : cases) {
    const auto path = dir / (std::string("x_") + c.bits + "." + std::string(extension(c.container)));
    AudioWriteResult r = write_mono_audio(path, x.data(), x.size(), 2000, c.container, c.encoding);
    CHECK(r.clipped_samples == c.clipped);
    // Reference: soundfile (libsndfile's Python binding) decodes the file independently.
    test::ProcessResult py = test::run_python(dir, "compare.py", kCompareScript,
                                              {path.string(), (dir / "x.f32").string(), c.bits, "2000"});
    INFO(path.string() << ": " << py.output);
    CHECK(py.exit_code == 0);
  }
}

TEST_CASE("quantisation maps full scale 1.0 to 2^(bits-1) and clips", "[export]") {
  bool clipped = false;
  // 0.5 of full scale is 16384 in 16 bits, left-aligned by 16 bits for sf_write_int.
  CHECK(quantise_left_aligned(0.5f, AudioEncoding::pcm16, &clipped) == (16384 << 16));
  CHECK_FALSE(clipped);
  CHECK(quantise_left_aligned(-1.0f, AudioEncoding::pcm24, &clipped) == std::numeric_limits<std::int32_t>::min());
  CHECK_FALSE(clipped);
  CHECK(quantise_left_aligned(1.0f, AudioEncoding::pcm16, &clipped) == (32767 << 16));
  CHECK(clipped);
}

TEST_CASE("FLAC refuses float samples and non-finite samples are refused", "[export]") {
  test::ScratchDir dir("audio-bad");
  std::vector<float> x(100, 0.1f);
  CHECK_THROWS_AS(write_mono_audio(dir / "a.flac", x.data(), x.size(), 2000, AudioContainer::flac,
                                   AudioEncoding::float32),
                  InputError);
  x[5] = std::nanf("");
  CHECK_THROWS_AS(write_mono_audio(dir / "a.wav", x.data(), x.size(), 2000, AudioContainer::wav, AudioEncoding::pcm16),
                  InputError);
  CHECK_FALSE(std::filesystem::exists(dir / "a.flac"));
  CHECK_FALSE(std::filesystem::exists(dir / "a.wav"));
}
