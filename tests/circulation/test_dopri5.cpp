// The circulation's Dormand-Prince 5(4) integrator (generator/circulation/dopri5.hpp) against
// scipy.integrate.solve_ivp's RK45 (the same pair and continuous extension) step by step, and
// against closed-form solutions.
#include <catch2/catch.hpp>

#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <string>

#include <unistd.h>

#include <nlohmann/json.hpp>

#include "generator/circulation/dopri5.hpp"

using namespace stethogen::gen;

namespace {

using Pair = std::array<double, 2>;

struct ForcedPendulum {  // the system of tests/circulation/dopri5_reference.py
  void operator()(const Pair& y, Pair& d, double t) const {
    d[0] = y[1];
    d[1] = -std::sin(y[0]) - 0.2 * y[1] + 0.5 * std::cos(1.3 * t);
  }
};

struct Oscillator {  // y'' = -y
  int* calls;
  void operator()(const Pair& y, Pair& d, double) const {
    ++*calls;
    d[0] = y[1];
    d[1] = -y[0];
  }
};

std::string env_or(const char* name, const char* fallback) {
  const char* v = std::getenv(name);
  return v ? v : fallback;
}

}  // namespace

TEST_CASE("Dormand-Prince steps and dense output agree with scipy's RK45 at a fixed step", "[circulation]") {
  const auto out_path =
      std::filesystem::temp_directory_path() / ("stethogen-dopri5-" + std::to_string(::getpid()) + ".json");
  const std::string cmd = env_or("STETHOGEN_PYTHON", "/usr/bin/python3") + " " + env_or("STETHOGEN_SOURCE_DIR", ".") +
                          "/tests/circulation/dopri5_reference.py 0.05 2.0 0.25 0.5 0.9 > " + out_path.string();
  REQUIRE(std::system(cmd.c_str()) == 0);
  nlohmann::json ref;
  std::ifstream(out_path) >> ref;
  std::filesystem::remove(out_path);
  REQUIRE(ref["steps"].size() == 40);

  // Tolerances far above any error estimate: every attempt is accepted and capped at 0.05 s.
  Dopri5<ForcedPendulum, 2> stepper(ForcedPendulum{}, Pair{1.0, 0.0}, 0.0, 0.05, Dopri5Control{1e3, 1e3, 0.05});
  double worst_step = 0, worst_dense = 0;
  for (std::size_t k = 0; k < 40; ++k) {
    REQUIRE(stepper.step());
    const auto& expected = ref["steps"][k];
    CHECK(stepper.time_s() == Approx(expected[0].get<double>()).margin(1e-12));
    for (int i = 0; i < 2; ++i)
      worst_step = std::max(worst_step, std::fabs(stepper.state()[i] - expected[i + 1].get<double>()));
    for (int f = 0; f < 3; ++f) {
      const auto& row = ref["dense"][3 * k + f];
      Pair y;
      stepper.state_at(row[0].get<double>(), y);
      for (int i = 0; i < 2; ++i) {
        worst_dense = std::max(worst_dense, std::fabs(y[i] - row[i + 1].get<double>()));
        CHECK(stepper.component_at(row[0].get<double>(), i) == y[i]);
      }
    }
  }
  // scipy sums the stages in another order: rounding differences only.
  CHECK(worst_step <= 1e-13);
  CHECK(worst_dense <= 1e-13);
}

TEST_CASE("Dormand-Prince with step control meets its tolerance on the harmonic oscillator", "[circulation]") {
  // Closed form (common practice): y = cos t, y' = -sin t from y(0) = 1, y'(0) = 0.
  int calls = 0;
  Dopri5<Oscillator, 2> stepper(Oscillator{&calls}, Pair{1.0, 0.0}, 0.0, 1e-4, Dopri5Control{1e-8, 1e-8, 0.0});
  int steps = 0;
  double worst_dense = 0;
  while (stepper.time_s() < 20.0) {
    REQUIRE(stepper.step());
    ++steps;
    // The dense output meets both ends of the step and stays on the solution inside it.
    Pair y;
    stepper.state_at(stepper.previous_time_s(), y);
    CHECK(std::fabs(y[0] - std::cos(stepper.previous_time_s())) < 1e-6);
    stepper.state_at(stepper.time_s(), y);
    CHECK(y[0] == Approx(stepper.state()[0]).margin(1e-14));
    for (double f : {0.2, 0.5, 0.7}) {
      const double t = stepper.previous_time_s() + f * (stepper.time_s() - stepper.previous_time_s());
      stepper.state_at(t, y);
      worst_dense = std::max({worst_dense, std::fabs(y[0] - std::cos(t)), std::fabs(y[1] + std::sin(t))});
    }
  }
  const double t = stepper.time_s();
  // Global error grows about linearly with the local tolerance over ~3 periods.
  CHECK(std::fabs(stepper.state()[0] - std::cos(t)) < 1e-6);
  CHECK(std::fabs(stepper.state()[1] + std::sin(t)) < 1e-6);
  CHECK(worst_dense < 1e-6);
  // FSAL: one evaluation to start, six per attempt; a step of ~0.02-0.1 s at 1e-8.
  CHECK(steps > 100);
  CHECK(steps < 1000);
  CHECK(calls >= 1 + 6 * steps);
  CHECK(calls <= 1 + 6 * (steps + steps / 5));
}

TEST_CASE("Dormand-Prince honours its step limit and reports a step it cannot make", "[circulation]") {
  int calls = 0;
  Dopri5<Oscillator, 2> limited(Oscillator{&calls}, Pair{1.0, 0.0}, 0.0, 1e-4, Dopri5Control{1e-3, 1e-3, 0.01});
  for (int k = 0; k < 200; ++k) {
    REQUIRE(limited.step());
    CHECK(limited.time_s() - limited.previous_time_s() <= 0.01 + 1e-15);
  }
  // No tolerance at all: every attempt is rejected, the state and time stay where they were.
  Dopri5<Oscillator, 2> impossible(Oscillator{&calls}, Pair{1.0, 0.0}, 0.0, 1e-3, Dopri5Control{0.0, 0.0, 0.0, 50});
  CHECK_FALSE(impossible.step());
  CHECK(impossible.time_s() == 0.0);
  CHECK(impossible.state()[0] == 1.0);
  CHECK(impossible.step_size_s() < 1e-3 * std::pow(0.2, 40));
}

namespace {
using Chain = std::array<double, 21>;  // the circulation's state size: four AVX lanes and a remainder
struct NonlinearChain {
  void operator()(const Chain& y, Chain& d, double t) const {
    for (std::size_t i = 0; i < 21; ++i)
      d[i] = std::sin(y[(i + 1) % 21]) - 0.3 * y[i] + 0.1 * std::cos(t * static_cast<double>(i));
  }
};
}  // namespace

TEST_CASE("Dormand-Prince gives bit-identical steps and dense output with and without AVX", "[circulation]") {
  // On a CPU without AVX both runs take the SSE2 code and the check holds trivially.
  INFO("AVX available: " << dopri5_avx_available());
  Chain y0;
  for (std::size_t i = 0; i < 21; ++i) y0[i] = 0.1 * static_cast<double>(i) - 1.0;
  Dopri5<NonlinearChain, 21> avx(NonlinearChain{}, y0, 0.0, 1e-4, Dopri5Control{1e-7, 1e-7, 0.05, 500, true});
  Dopri5<NonlinearChain, 21> plain(NonlinearChain{}, y0, 0.0, 1e-4, Dopri5Control{1e-7, 1e-7, 0.05, 500, false});
  int identical = 0;
  for (int k = 0; k < 300; ++k) {
    REQUIRE(avx.step());
    REQUIRE(plain.step());
    REQUIRE(avx.time_s() == plain.time_s());
    REQUIRE(avx.step_size_s() == plain.step_size_s());
    Chain a, b;
    const double t = 0.3 * avx.previous_time_s() + 0.7 * avx.time_s();
    avx.state_at(t, a);
    plain.state_at(t, b);
    identical += a == b && avx.state() == plain.state();
  }
  CHECK(identical == 300);
}
