// Challenge split (docs/scoring.md): a public bundle with only the noisy signals and the
// acquisition metadata a participant may see, under opaque shuffled record ids, and a key
// bundle with the full truth under the same ids plus the id mapping, so `score KEY ...` works
// on detections made from the public bundle.
#pragma once

#include <cstdint>
#include <filesystem>
#include <string>

namespace stethogen::scoring {

struct SplitOptions {
  std::filesystem::path bundle, public_path, key_path;
  std::uint64_t seed = 0;
  bool force = false;
};

struct SplitReport {
  std::size_t records = 0;
};

// Where the key keeps the mapping: columns public_id, record_id.
inline constexpr const char* kIdMapPath = "/key/id_map";

// "c" + the first 16 hex digits of HMAC-SHA256(seed, record_id) (RFC 2104): unguessable
// without the seed, stable for a given seed.
std::string opaque_id(std::uint64_t seed, const std::string& record_id);

SplitReport split_bundle(const SplitOptions& options);

}  // namespace stethogen::scoring
