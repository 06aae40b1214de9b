#include <catch2/catch.hpp>

#include <cmath>

#include "core/random.hpp"
#include "python_reference.hpp"
#include "scoring/metrics.hpp"

using namespace stethogen::scoring;

TEST_CASE("sensitivity and positive predictivity follow ANSI/AAMI EC57", "[metrics]") {
  Tally t{90, 10, 30, {}};
  // ANSI/AAMI EC57: Se = TP / (TP + FN), +P = TP / (TP + FP).
  REQUIRE(t.sensitivity() == Approx(90.0 / 120.0));
  REQUIRE(t.ppv() == Approx(90.0 / 100.0));
  // F1 is the harmonic mean of Se and +P (common practice).
  REQUIRE(t.f1() == Approx(2 * 0.75 * 0.9 / (0.75 + 0.9)));
  Tally nothing;
  REQUIRE(std::isnan(nothing.sensitivity()));
  REQUIRE(std::isnan(nothing.ppv()));
  Tally all_missed{0, 0, 5, {}};
  REQUIRE(all_missed.f1() == 0.0);
}

TEST_CASE("timing statistics agree with numpy", "[metrics]") {
  stethogen::RandomStream rng(3, 0, 9);
  std::vector<double> errors;
  for (int i = 0; i < 57; ++i) errors.push_back(rng.normal(0.004, 0.012));
  TimingSummary s = summarize_timing(errors);
  // numpy.mean / numpy.std(ddof=1) / numpy.median / numpy.percentile (linear interpolation).
  auto ref = stethogen::test::run_python(R"(
import json, sys
import numpy as np
e = np.array(json.load(sys.stdin)) * 1e3
a = np.abs(e)
json.dump({'mean_abs': a.mean(), 'sd': e.std(ddof=1), 'median': np.median(a),
           'p95': np.percentile(a, 95), 'bias': e.mean()}, sys.stdout)
)", errors);
  REQUIRE(s.n == errors.size());
  REQUIRE(s.mean_abs_ms == Approx(ref["mean_abs"].get<double>()).epsilon(1e-12));
  REQUIRE(s.sd_ms == Approx(ref["sd"].get<double>()).epsilon(1e-12));
  REQUIRE(s.median_abs_ms == Approx(ref["median"].get<double>()).epsilon(1e-12));
  REQUIRE(s.p95_abs_ms == Approx(ref["p95"].get<double>()).epsilon(1e-12));
  REQUIRE(s.bias_ms == Approx(ref["bias"].get<double>()).epsilon(1e-12));
}
