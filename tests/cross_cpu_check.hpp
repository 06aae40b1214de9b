// Same output whatever libm variant the CPU selects (DESIGN.md "Determinism"): a test computes a
// digest of its stages' outputs, then runs itself again in a child process with glibc's FMA
// and AVX2 variants masked (GLIBC_TUNABLES), where libm takes its other code paths, and
// requires the child's digest to be the same.
#pragma once

#include <catch2/catch.hpp>

#include <cstdint>
#include <cstdio>
#include <cstring>
#include <iomanip>
#include <sstream>
#include <string>
#include <vector>

#include <unistd.h>

namespace cross_cpu {

// FNV-1a, 64 bit, over the bytes of the values fed to it (Fowler, Noll & Vo; common practice).
struct Digest {
  std::uint64_t h = 14695981039346656037ull;
  void bytes(const void* p, std::size_t n) {
    const auto* b = static_cast<const unsigned char*>(p);
    for (std::size_t i = 0; i < n; ++i) h = (h ^ b[i]) * 1099511628211ull;
  }
  template <class T> void value(T v) { bytes(&v, sizeof v); }
  template <class T> void values(const std::vector<T>& v) { bytes(v.data(), v.size() * sizeof(T)); }
  std::string hex() const {
    std::ostringstream s;
    s << std::hex << std::setw(16) << std::setfill('0') << h;
    return s.str();
  }
};

inline constexpr const char* kMarker = "cross-cpu-digest ";
inline constexpr const char* kMaskedTunables = "glibc.cpu.hwcaps=-FMA,-AVX2";

// In the child: the line the parent looks for.
inline void print_digest(const std::string& hex) { std::printf("%s%s\n", kMarker, hex.c_str()); }

// Runs this executable's hidden test case `test_name` with libm's FMA/AVX2 variants masked and
// returns the digest it printed (empty if none).
inline std::string digest_with_masked_cpu(const std::string& test_name) {
  char exe[4096];
  const ssize_t len = readlink("/proc/self/exe", exe, sizeof exe - 1);
  if (len <= 0) return {};
  exe[len] = '\0';
  const std::string command =
      std::string("GLIBC_TUNABLES=") + kMaskedTunables + " '" + exe + "' '" + test_name + "' 2>&1";
  FILE* pipe = popen(command.c_str(), "r");
  if (!pipe) return {};
  std::string digest;
  char line[4096];
  while (std::fgets(line, sizeof line, pipe)) {
    if (std::strncmp(line, kMarker, std::strlen(kMarker)) != 0) continue;
    digest = line + std::strlen(kMarker);
    while (!digest.empty() && (digest.back() == '\n' || digest.back() == '\r')) digest.pop_back();
  }
  pclose(pipe);
  return digest;
}

// The parent's half: the digest computed here must equal the one the hidden test case
// `child_test` prints with libm's FMA/AVX2 variants masked.
inline void require_same_when_masked(const std::string& here, const std::string& child_test) {
  const std::string masked = digest_with_masked_cpu(child_test);
  INFO("digest here " << here << ", with " << kMaskedTunables << " " << masked);
  REQUIRE(masked == here);
}

}  // namespace cross_cpu
