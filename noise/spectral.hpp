// Gaussian noise generators: white, and coloured by spectral synthesis (a random Gaussian
// spectrum shaped by the target amplitude response, inverse FFT with FFTW; Timmer & Koenig 1995,
// "On generating power law noise", Astron Astrophys 300:707).
#pragma once

#include <cstddef>
#include <functional>
#include <vector>

#include "core/random.hpp"
#include "noise/gaussian.hpp"

namespace stethogen::noise {

// amplitude(frequency_hz) (|H(f)|; power spectrum |H|^2) at the n/2 + 1 real-FFT bins of
// length n at sample_rate_hz; DC is zero.
std::vector<double> amplitude_response(std::size_t n, double sample_rate_hz,
                                       const std::function<double(double frequency_hz)>& amplitude);

// n samples of stationary Gaussian noise with that amplitude response, scaled to unit mean
// power. The synthesis is circular: the signal wraps without a seam.
std::vector<float> shaped_gaussian(RandomStream& rng, const std::vector<double>& response, std::size_t n);

// Mean of x^2.
double mean_power(const float* x, std::size_t n);

}  // namespace stethogen::noise
