// Gaussian noise generators: white, and coloured by spectral synthesis (a random Gaussian
// spectrum shaped by the target amplitude response, inverse FFT with FFTW; Timmer & Koenig 1995,
// "On generating power law noise", Astron Astrophys 300:707).
#pragma once

#include <cstddef>
#include <functional>
#include <memory>
#include <string>
#include <vector>

#include "core/random.hpp"
#include "noise/gaussian.hpp"

namespace stethogen::noise {

// amplitude(frequency_hz) (|H(f)|; power spectrum |H|^2) at the n/2 + 1 real-FFT bins of
// length n at sample_rate_hz; DC is zero.
std::vector<float> amplitude_response(std::size_t n, double sample_rate_hz,
                                      const std::function<double(double frequency_hz)>& amplitude);

// The same, kept per (shape, n, rate) for the life of the process: every record of a dataset
// with the same length and profile shares one. shape must name the amplitude function and all
// of its parameters exactly (it is the cache key). Safe to call from several threads.
std::shared_ptr<const std::vector<float>> cached_response(const std::string& shape, std::size_t n,
                                                          double sample_rate_hz,
                                                          const std::function<double(double frequency_hz)>& amplitude);

struct FftwFree {
  void operator()(void* p) const;
};

// n samples of stationary Gaussian noise with that amplitude response (single-precision FFT),
// at the level the spectrum gives: mean_power says which. The synthesis is circular: the
// signal wraps without a seam.
struct ShapedNoise {
  std::unique_ptr<float, FftwFree> samples;  // n values, the transform's own output buffer
  double mean_power = 0;                     // of samples, from the spectrum (Parseval)
};
ShapedNoise shaped_gaussian(RandomStream& rng, const std::vector<float>& response, std::size_t n);

// Mean of x^2, summed in double (what the SNR is computed from).
double mean_power(const float* x, std::size_t n);
// The same to about 1e-6 relative (blocks summed in float), for levels that need no more.
double rough_mean_power(const float* x, std::size_t n);

}  // namespace stethogen::noise
