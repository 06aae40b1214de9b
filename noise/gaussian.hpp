// Fast standard normal deviates for noise: the ziggurat method (Marsaglia & Tsang 2000, "The
// ziggurat method for generating random variables", J Stat Softw 5(8)), 256 layers. Each call
// takes one 64-bit seed from the record's counter-based RandomStream and draws the bulk bits
// from SplitMix64 (Steele, Lea & Flood 2014, OOPSLA). Layer index and value come from separate
// bits of each 32-bit word, avoiding the index/value correlation Doornik (2005) found in the original.
#pragma once

#include <cstddef>

#include "core/random.hpp"

namespace stethogen::noise {

// fastest: the bulk bits by AVX2 where the processor has it. Both paths give bit-identical
// values; portable exists so that tests can show it.
enum class GaussianPath { fastest, portable };

// Fills out[0, n) with independent N(0, 1) values; consumes exactly one next_u64() of rng.
void fill_gaussian(RandomStream& rng, float* out, std::size_t n, GaussianPath path = GaussianPath::fastest);

// Whether GaussianPath::fastest runs the AVX2 kernel on this machine.
bool gaussian_uses_avx2();

}  // namespace stethogen::noise
