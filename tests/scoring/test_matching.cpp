#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>

#include "core/random.hpp"
#include "python_reference.hpp"
#include "scoring/matching.hpp"
#include "scoring/metrics.hpp"

using namespace stethogen;
using namespace stethogen::scoring;

namespace {

struct Case {
  std::vector<double> truth, detections;
  double window_s = 0.05;
};

// Random event lists with clusters, doublets and misses, every pair kept at least 0.5 ms off the
// exact window edge (where the reference's float comparison may differ from ours).
std::vector<Case> random_cases(std::size_t count) {
  RandomStream rng(20261201, 7, 1);
  std::vector<Case> cases;
  while (cases.size() < count) {
    Case c;
    c.window_s = rng.uniform(0.02, 0.15);
    auto n_truth = static_cast<std::size_t>(rng.uniform(1, 40));
    double t = rng.uniform(0, 0.5);
    for (std::size_t i = 0; i < n_truth; ++i) {
      t += rng.uniform(0.03, 0.8);
      c.truth.push_back(t);
      double u = rng.uniform();
      if (u < 0.7) c.detections.push_back(t + rng.normal(0, c.window_s * 0.8));
      if (u > 0.85) c.detections.push_back(t + rng.uniform(-2 * c.window_s, 2 * c.window_s));
    }
    auto n_false = static_cast<std::size_t>(rng.uniform(0, 8));
    for (std::size_t i = 0; i < n_false; ++i) c.detections.push_back(rng.uniform(0, t + 1));
    std::erase_if(c.detections, [](double d) { return d < 0; });
    std::sort(c.detections.begin(), c.detections.end());
    if (c.detections.empty()) continue;
    bool near_edge = false;
    for (double a : c.truth)
      for (double b : c.detections) near_edge |= std::abs(std::abs(a - b) - c.window_s) < 5e-4;
    if (!near_edge) cases.push_back(std::move(c));
  }
  return cases;
}

const char* kReferenceScript = R"(
import json, sys
import numpy as np
import mir_eval
from scipy.optimize import linear_sum_assignment
out = []
for c in json.load(sys.stdin):
    ref, est, w = np.array(c['truth']), np.array(c['detections']), c['window']
    pairs = mir_eval.util.match_events(ref, est, w)
    f, p, r = mir_eval.onset.f_measure(ref, est, window=w)
    cost = np.abs(ref[:, None] - est[None, :])
    big = 1e6
    rows, cols = linear_sum_assignment(np.where(cost <= w, cost, big))
    ok = cost[rows, cols] <= w
    out.append({'matches': len(pairs), 'f': f, 'p': p, 'r': r,
                'min_error': float(cost[rows, cols][ok].sum()), 'assignment_matches': int(ok.sum())})
json.dump(out, sys.stdout)
)";

}  // namespace

TEST_CASE("matching agrees with mir_eval and with an optimal assignment on random cases", "[matching]") {
  std::vector<Case> cases = random_cases(250);
  nlohmann::json input = nlohmann::json::array();
  for (const Case& c : cases) input.push_back({{"truth", c.truth}, {"detections", c.detections}, {"window", c.window_s}});
  nlohmann::json reference = test::run_python(kReferenceScript, input);
  REQUIRE(reference.size() == cases.size());
  for (std::size_t k = 0; k < cases.size(); ++k) {
    const Case& c = cases[k];
    const auto& ref = reference[k];
    std::vector<MatchedPair> pairs = match_events(c.truth, c.detections, c.window_s);
    INFO("case " << k << ", window " << c.window_s);
    // Every pair lies within the window and uses each event once.
    std::vector<bool> used_t(c.truth.size()), used_d(c.detections.size());
    double total_error = 0;
    for (const MatchedPair& p : pairs) {
      REQUIRE(std::abs(c.truth[p.truth] - c.detections[p.detection]) <= c.window_s);
      REQUIRE_FALSE(used_t[p.truth]);
      REQUIRE_FALSE(used_d[p.detection]);
      used_t[p.truth] = used_d[p.detection] = true;
      total_error += std::abs(c.truth[p.truth] - c.detections[p.detection]);
    }
    // mir_eval.util.match_events (maximum bipartite matching): same number of pairs.
    REQUIRE(pairs.size() == ref["matches"].get<std::size_t>());
    // mir_eval.onset.f_measure: F1, precision and recall from the same counts.
    Tally t{pairs.size(), c.detections.size() - pairs.size(), c.truth.size() - pairs.size(), {}};
    REQUIRE(t.f1() == Approx(ref["f"].get<double>()).margin(1e-12));
    REQUIRE(t.ppv() == Approx(ref["p"].get<double>()).margin(1e-12));
    REQUIRE(t.sensitivity() == Approx(ref["r"].get<double>()).margin(1e-12));
    // scipy.optimize.linear_sum_assignment with a prohibitive cost outside the window: the least
    // total absolute error among maximum matchings.
    REQUIRE(pairs.size() == ref["assignment_matches"].get<std::size_t>());
    REQUIRE(total_error == Approx(ref["min_error"].get<double>()).margin(1e-9));
  }
}

TEST_CASE("a doublet is matched by its closer detection", "[matching]") {
  // Worked example: one true sound at 1.00 s, detections at 0.95 s and 1.00 s, window 0.1 s.
  std::vector<double> truth = {1.0}, detections = {0.95, 1.0};
  auto pairs = match_events(truth, detections, 0.1);
  REQUIRE(pairs.size() == 1);
  REQUIRE(pairs[0].detection == 1);
}

TEST_CASE("a component too large for the exact table is still matched completely", "[matching]") {
  // 3000 sounds 10 ms apart, each detected 1 ms late, window 50 ms: one cluster of 6000 points,
  // beyond the exact table; the earliest-first greedy still pairs every sound (Glover 1967).
  std::vector<double> truth, detections;
  for (int i = 0; i < 3000; ++i) {
    truth.push_back(0.01 * i);
    detections.push_back(0.01 * i + 0.001);
  }
  auto pairs = match_events(truth, detections, 0.05);
  REQUIRE(pairs.size() == 3000);
  for (const MatchedPair& p : pairs) REQUIRE(p.truth == p.detection);
}

TEST_CASE("empty inputs match nothing", "[matching]") {
  std::vector<double> none, some = {1.0, 2.0};
  REQUIRE(match_events(none, some, 0.1).empty());
  REQUIRE(match_events(some, none, 0.1).empty());
}
