#include <catch2/catch.hpp>

#include <cmath>
#include <complex>
#include <numbers>
#include <sstream>

#include <fmt/format.h>

#include "fixtures.hpp"
#include "python_reference.hpp"
#include "scoring/baseline_detector.hpp"
#include "scoring/event_score.hpp"

using namespace stethogen;
using namespace stethogen::scoring;

namespace {

double magnitude(const std::vector<Biquad>& sections, double f_hz, double fs_hz) {
  std::complex<double> z = std::polar(1.0, 2 * std::numbers::pi * f_hz / fs_hz), h = 1;
  for (const Biquad& s : sections)
    h *= (s.b0 + s.b1 / z + s.b2 / (z * z)) / (1.0 + s.a1 / z + s.a2 / (z * z));
  return std::abs(h);
}

double baseline_f1(const Record& r) {
  MemoryTruth truth({r});
  std::string csv = "record_id,kind,time_s,site\n";
  for (const DetectedSound& s : detect_heart_sounds(r.pcg.row(1), r.pcg.n_samples, r.sample_rate_hz))
    csv += fmt::format("{},{},{},mitral\n", r.subject.record_id, name(s.kind), s.time_s);
  std::istringstream in(csv);
  EventScoreOptions options;
  options.kinds = {EventKind::S1, EventKind::S2};
  EventScore score = score_events(truth, parse_detections(in, "det.csv", truth.records(), false), options);
  Tally both;
  for (const auto& [kind, t] : score.groups.at(GroupKey{kAll, 0, "all"})) both.add(t);
  return both.f1();
}

}  // namespace

TEST_CASE("the band-pass matches scipy's Butterworth design", "[baseline]") {
  const double fs = 4000;
  std::vector<Biquad> sections = butterworth_band(25, 400, fs);
  std::vector<double> freqs = {5, 15, 25, 50, 100, 200, 400, 600, 1000, 1900};
  // scipy.signal.butter(4, f, btype, fs=fs, output='sos') cascaded, response by sosfreqz.
  auto ref = test::run_python(R"(
import json, sys
import numpy as np
from scipy import signal
c = json.load(sys.stdin)
sos = np.vstack([signal.butter(4, 25, 'highpass', fs=c['fs'], output='sos'),
                 signal.butter(4, 400, 'lowpass', fs=c['fs'], output='sos')])
w, h = signal.sosfreqz(sos, worN=np.array(c['f']), fs=c['fs'])
json.dump(list(np.abs(h)), sys.stdout)
)", {{"fs", fs}, {"f", freqs}});
  for (std::size_t i = 0; i < freqs.size(); ++i) {
    INFO(freqs[i] << " Hz");
    REQUIRE(magnitude(sections, freqs[i], fs) == Approx(ref[i].get<double>()).epsilon(1e-9).margin(1e-12));
  }
}

TEST_CASE("the Shannon envelope peaks on each burst of a clean record", "[baseline]") {
  Record r = test::fixture_record({});
  std::vector<DetectedSound> found = detect_heart_sounds(r.pcg.row(1), r.pcg.n_samples, r.sample_rate_hz);
  REQUIRE(found.size() >= 20);
  REQUIRE(baseline_f1(r) > 0.95);
}

TEST_CASE("the baseline's F1 falls as white noise rises (hand-built bursts)", "[baseline]") {
  std::vector<double> f1;
  for (double snr_db : {20.0, 0.0, -10.0, -20.0}) {
    test::FixtureSpec spec;
    spec.duration_s = 20;
    spec.snr_db = snr_db;
    f1.push_back(baseline_f1(test::fixture_record(spec)));
  }
  INFO(fmt::format("F1 at 20, 0, -10, -20 dB: {}", fmt::join(f1, ", ")));
  REQUIRE(f1.front() > 0.9);
  for (std::size_t i = 1; i < f1.size(); ++i) REQUIRE(f1[i] <= f1[i - 1] + 0.02);
  REQUIRE(f1.back() < f1.front() - 0.3);
}
