// User-supplied noise recordings: decoding (libsndfile) and resampling (libsoxr).
#pragma once

#include <memory>
#include <string>
#include <vector>

#include "noise/profile.hpp"

namespace stethogen::noise {

// Decodes a WAV, FLAC or OGG file into a mono mix of its channels. Throws InputError naming
// the path if the file is missing, unreadable, of another format, empty, silent or non-finite.
RecordingAudio load_recording(const std::string& path);

// The recording at rate_hz (libsoxr, high quality); cached per rate, safe to call from threads.
std::shared_ptr<const std::vector<float>> resampled(const RecordingAudio& audio, int rate_hz);

}  // namespace stethogen::noise
