// SplitMix64 words for fill_gaussian (noise/gaussian.cpp), from a portable loop or, on x86-64,
// an AVX2 one chosen at run time; both are integer arithmetic and give the same words, so the
// output does not depend on the machine.
#pragma once

#include <cstddef>
#include <cstdint>

namespace stethogen::noise::detail {

inline constexpr std::uint64_t kSplitMixGamma = 0x9e3779b97f4a7c15ull;

// SplitMix64 outputs for the states base + p * gamma, p = 1 .. pairs, as 32-bit words, low
// half first: words[2p - 2], words[2p - 1].
void splitmix_words_portable(std::uint64_t base, std::uint32_t* words, std::size_t pairs);
#if defined(__x86_64__) && defined(__GNUC__)
#define STETHOGEN_HAVE_AVX2_KERNELS 1
void splitmix_words_avx2(std::uint64_t base, std::uint32_t* words, std::size_t pairs);
#endif

}  // namespace stethogen::noise::detail
