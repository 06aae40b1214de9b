// AVX2 version of the SplitMix64 words (noise/splitmix.hpp), compiled for AVX2 whatever the
// build's target and only called when the processor has it. (An AVX2 ziggurat step with table
// gathers was tried too: no faster than the scalar one on the development machine.)
#include "noise/splitmix.hpp"

#ifdef STETHOGEN_HAVE_AVX2_KERNELS

#include <immintrin.h>

namespace stethogen::noise::detail {

namespace {

// 64-bit products modulo 2^64 from 32 x 32 -> 64 bit multiplies (AVX2 has no 64-bit multiply).
__attribute__((target("avx2"))) inline __m256i mul64(__m256i a, __m256i b_lo, __m256i b_hi) {
  __m256i lo = _mm256_mul_epu32(a, b_lo);
  __m256i cross = _mm256_add_epi64(_mm256_mul_epu32(_mm256_srli_epi64(a, 32), b_lo), _mm256_mul_epu32(a, b_hi));
  return _mm256_add_epi64(lo, _mm256_slli_epi64(cross, 32));
}

}  // namespace

__attribute__((target("avx2"))) void splitmix_words_avx2(std::uint64_t base, std::uint32_t* words,
                                                          std::size_t pairs) {
  const __m256i m1_lo = _mm256_set1_epi64x(static_cast<long long>(0xbf58476d1ce4e5b9ull & 0xffffffffull));
  const __m256i m1_hi = _mm256_set1_epi64x(static_cast<long long>(0xbf58476d1ce4e5b9ull >> 32));
  const __m256i m2_lo = _mm256_set1_epi64x(static_cast<long long>(0x94d049bb133111ebull & 0xffffffffull));
  const __m256i m2_hi = _mm256_set1_epi64x(static_cast<long long>(0x94d049bb133111ebull >> 32));
  const __m256i step = _mm256_set1_epi64x(static_cast<long long>(4 * kSplitMixGamma));
  __m256i state = _mm256_set_epi64x(static_cast<long long>(base + 4 * kSplitMixGamma),
                                    static_cast<long long>(base + 3 * kSplitMixGamma),
                                    static_cast<long long>(base + 2 * kSplitMixGamma),
                                    static_cast<long long>(base + kSplitMixGamma));
  std::size_t p = 0;
  for (; p + 4 <= pairs; p += 4) {
    __m256i z = state;
    z = mul64(_mm256_xor_si256(z, _mm256_srli_epi64(z, 30)), m1_lo, m1_hi);
    z = mul64(_mm256_xor_si256(z, _mm256_srli_epi64(z, 27)), m2_lo, m2_hi);
    z = _mm256_xor_si256(z, _mm256_srli_epi64(z, 31));
    _mm256_storeu_si256(reinterpret_cast<__m256i*>(words + 2 * p), z);  // little-endian: low half first
    state = _mm256_add_epi64(state, step);
  }
  if (p < pairs) splitmix_words_portable(base + p * kSplitMixGamma, words + 2 * p, pairs - p);
}

}  // namespace stethogen::noise::detail

#endif
