// The same equations integrated independently by scipy.integrate.solve_ivp (DOP853, rtol 1e-10)
// in validation/circulation_reference.py must agree with the engine.
#include <catch2/catch.hpp>

#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>

#include <unistd.h>

#include <nlohmann/json.hpp>

#include "engine_helpers.hpp"
#include "generator/circulation/beat_analysis.hpp"
#include "generator/circulation/reference_case.hpp"

using namespace stethogen;
using namespace stethogen::gen;
using namespace stethogen::gen::test;

namespace {

std::string env_or(const char* name, const char* fallback) {
  const char* v = std::getenv(name);
  return v ? v : fallback;
}

nlohmann::json run_reference(const std::string& case_json) {
  // One folder per process: ctest runs the reference cases in parallel.
  const auto dir = std::filesystem::temp_directory_path() /
                   ("stethogen-circulation-reference-" + std::to_string(::getpid()));
  std::filesystem::create_directories(dir);
  const auto case_path = dir / "case.json", out_path = dir / "out.json";
  std::ofstream(case_path) << case_json;
  const std::string cmd = env_or("STETHOGEN_PYTHON", "/usr/bin/python3") + " " +
                          env_or("STETHOGEN_SOURCE_DIR", ".") +
                          "/validation/circulation_reference.py " + case_path.string() + " > " + out_path.string();
  REQUIRE(std::system(cmd.c_str()) == 0);
  std::ifstream in(out_path);
  return nlohmann::json::parse(in);
}

void compare(const SubjectSpec& subject, double span_s) {
  const EngineRun run = run_engine(subject);
  const CirculationResult& r = run.result;
  const double t0 = r.series.t0_s, t1 = t0 + span_s;
  std::vector<double> times;
  for (double t = t0 + 0.001; t < t1; t += 0.004) times.push_back(t);
  const nlohmann::json ref = run_reference(reference_case_json(run, t1, times));
  REQUIRE(!ref.contains("error"));

  // Pressures within 1 % of each trace's peak magnitude (relative to the value itself would be
  // meaningless where a pressure crosses zero).
  const std::vector<std::pair<const char*, const std::vector<double>*>> traces = {
      {"p_lv", &r.series.p_lv}, {"p_ao", &r.series.p_ao}, {"p_rv", &r.series.p_rv},
      {"p_pa", &r.series.p_pa}, {"p_la", &r.series.p_la}, {"p_ra", &r.series.p_ra}};
  for (const auto& [key, channel] : traces) {
    const std::vector<double> expected = ref[key].get<std::vector<double>>();
    double peak = 0, worst = 0;
    for (double v : expected) peak = std::max(peak, std::fabs(v));
    for (std::size_t i = 0; i < times.size(); ++i)
      worst = std::max(worst, std::fabs(series_value_at(r.series, *channel, times[i]) - expected[i]));
    INFO(key << ": worst difference " << worst << " mmHg of peak " << peak);
    // The engine's value is read off its 2 kHz series by linear interpolation; 1 % covers that too.
    CHECK(worst <= 0.01 * peak);
  }

  // Valve transitions within 0.5 ms, one for one (away from the window end).
  int matched = 0;
  for (const auto& e : ref["transitions"]) {
    const int valve = e[0].get<int>();
    const bool opening = e[1].get<int>() == 1;
    const double t = e[2].get<double>();
    if (t > t1 - 0.01) continue;
    double best = INFINITY;
    for (const auto& tr : r.transitions)
      if (static_cast<int>(tr.valve) == valve && tr.opening == opening) best = std::min(best, std::fabs(tr.time_s - t));
    INFO("valve " << valve << (opening ? " opens" : " closes") << " at " << t << " s: nearest engine event " << best * 1e3 << " ms");
    CHECK(best <= 0.5e-3);
    ++matched;
  }
  int engine_events = 0;
  for (const auto& tr : r.transitions)
    if (tr.time_s >= t0 && tr.time_s < t1 - 0.01) ++engine_events;
  CHECK(engine_events == matched);
  CHECK(matched >= 16);  // at least two full cycles of all four valves
}

}  // namespace

TEST_CASE("solve_ivp reference agrees at rest with breathing", "[circulation][reference]") {
  compare(subject(State::rest, 0.0, 3.0, 75.0), 2.2);
}

TEST_CASE("solve_ivp reference agrees in LV failure", "[circulation][reference]") {
  compare(subject(State::lv_failure, 0.7, 3.0), 2.0);
}
