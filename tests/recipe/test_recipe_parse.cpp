#include <catch2/catch.hpp>

#include <array>
#include <cstdio>
#include <filesystem>
#include <set>

#include "core/error.hpp"
#include "recipe/plan.hpp"
#include "recipe/recipe.hpp"
#include "recipe_test_util.hpp"

using namespace stethogen;
using namespace stethogen::recipe;
using stethogen::recipe::test::parse;

namespace {

const Distribution& param(const PopulationSpec& p, Param k) {
  REQUIRE(p.params[static_cast<std::size_t>(k)].has_value());
  return *p.params[static_cast<std::size_t>(k)];
}

bool has(const PopulationSpec& p, Param k) { return p.params[static_cast<std::size_t>(k)].has_value(); }

std::vector<std::string> names(const Recipe& r) {
  std::vector<std::string> out;
  for (const auto& p : r.populations) out.push_back(p.name);
  return out;
}

}  // namespace

TEST_CASE("a minimal recipe gets the documented defaults", "[recipe]") {
  Recipe r = parse("[[population]]\nname = \"a\"\ncount = 3\nstate = \"rest\"\n",
                   "[dataset]\nname = \"mini\"\n");
  const DatasetSpec& d = r.dataset;
  CHECK(d.name == "mini");
  CHECK(d.seed == 0);
  CHECK(d.sample_rate_hz == 4000);
  CHECK(d.duration_s.kind == Distribution::Kind::fixed);
  CHECK(d.duration_s.value == 30.0);
  CHECK(d.sites == std::vector<Site>(kAllSites.begin(), kAllSites.end()));
  CHECK(d.sensor == Sensor::acoustic_diaphragm);
  CHECK(d.sample_format == SampleFormat::float32);
  CHECK(d.output == "mini.h5");
  CHECK(d.on_record_error == FailurePolicy::stop);
  REQUIRE(r.populations.size() == 1);
  const PopulationSpec& p = r.populations[0];
  CHECK(p.name == "a");
  CHECK(p.count == 3);
  CHECK(p.state == State::rest);
  CHECK(p.sweep.empty());
  CHECK(p.noise.names.empty());
  for (const auto& q : p.params) CHECK_FALSE(q.has_value());
  CHECK(r.noise_profiles.empty());
}

TEST_CASE("every [dataset] key is read", "[recipe]") {
  Recipe r = parse("[[population]]\nname = \"a\"\ncount = 1\nstate = \"rest\"\n",
                   "[dataset]\nname = \"full\"\nseed = 123456789012\nsample_rate_hz = 8000\n"
                   "duration_s = { uniform = [5, 9] }\nsites = [\"mitral\", \"aortic\"]\n"
                   "sensor = \"accelerometer\"\nsample_format = \"int24\"\noutput = \"out/x.h5\"\n"
                   "on_record_error = \"skip\"\n");
  const DatasetSpec& d = r.dataset;
  CHECK(d.seed == 123456789012ull);
  CHECK(d.sample_rate_hz == 8000);
  CHECK(d.duration_s.kind == Distribution::Kind::uniform);
  CHECK(d.duration_s.lo == 5);
  CHECK(d.duration_s.hi == 9);
  CHECK(d.sites == std::vector<Site>{Site::mitral, Site::aortic});
  CHECK(d.sensor == Sensor::accelerometer);
  CHECK(d.sample_format == SampleFormat::int24);
  CHECK(d.output == "out/x.h5");
  CHECK(d.on_record_error == FailurePolicy::skip);
}

TEST_CASE("distributions: fixed, uniform, truncated normal, weighted choice", "[recipe]") {
  Recipe r = parse(
      "[[population]]\nname = \"p\"\ncount = 1\nstate = \"lv_failure\"\nseverity = 0.4\n"
      "heart_rate_bpm = 72\n"
      "snr_db = { uniform = [-5, 12.5] }\n"
      "chest_wall_mm = { normal = { mean = 20, sd = 5 } }\n"
      "blood_volume_ml = { normal = { mean = 5000, sd = 300, min = 4000, max = 6000 } }\n"
      "lv_rv_delay_ms = { choice = [0, 20, 40], weights = [1, 0, 3] }\n"
      "pr_interval_ms = { choice = [150, 170] }\n");
  const PopulationSpec& p = r.populations.at(0);
  CHECK(param(p, Param::severity).value == 0.4);
  CHECK(param(p, Param::heart_rate_bpm).kind == Distribution::Kind::fixed);
  CHECK(param(p, Param::heart_rate_bpm).value == 72);
  CHECK(param(p, Param::snr_db).lo == -5);
  CHECK(param(p, Param::snr_db).hi == 12.5);
  // A normal without min/max is truncated to the parameter's own range.
  const Distribution& wall = param(p, Param::chest_wall_mm);
  CHECK(wall.kind == Distribution::Kind::normal);
  CHECK(wall.lo == info(Param::chest_wall_mm).lo);
  CHECK(wall.hi == info(Param::chest_wall_mm).hi);
  CHECK(param(p, Param::blood_volume_ml).lo == 4000);
  CHECK(param(p, Param::blood_volume_ml).sd == 300);
  const Distribution& delay = param(p, Param::lv_rv_delay_ms);
  CHECK(delay.values == std::vector<double>{0, 20, 40});
  CHECK(delay.weights == std::vector<double>{1, 0, 3});
  CHECK(delay.support_min() == 0);
  CHECK(delay.support_max() == 40);
  CHECK(param(p, Param::pr_interval_ms).weights == std::vector<double>{1, 1});
  CHECK_FALSE(has(p, Param::intensity));
}

TEST_CASE("a sweep expands its grid into stable, named populations", "[recipe]") {
  Recipe r = parse(
      "[[population]]\nname = \"base\"\ncount = 2\nstate = \"rest\"\n"
      "[[sweep]]\nname = \"ex\"\ncount = 3\nstate = \"exercise\"\nheart_rate_bpm = 60\n"
      "grid = { snr_db = [-5, 10], intensity = [0, 0.25, 1] }\n");
  // Axes in key order (intensity before snr_db), first axis outermost.
  CHECK(names(r) == std::vector<std::string>{"base", "ex_i0_snr-5", "ex_i0_snr10", "ex_i0.25_snr-5",
                                             "ex_i0.25_snr10", "ex_i1_snr-5", "ex_i1_snr10"});
  CHECK(record_count(r) == 2 + 6 * 3);
  const PopulationSpec& p = r.populations.at(3);
  CHECK(p.sweep == "ex");
  CHECK(p.count == 3);
  CHECK(p.state == State::exercise);
  CHECK(param(p, Param::intensity).value == 0.25);
  CHECK(param(p, Param::snr_db).value == -5);
  CHECK(param(p, Param::heart_rate_bpm).value == 60);
}

TEST_CASE("noise profiles are referenced by name, by weighted choice or by a sweep axis", "[recipe]") {
  Recipe r = parse(
      "[noise.quiet]\nsensor_white = { level_db = -10 }\n"
      "[noise.loud]\nambient = { color = \"pink\", level_db = 0 }\n"
      "[[population]]\nname = \"one\"\ncount = 1\nstate = \"rest\"\nnoise = \"quiet\"\n"
      "[[population]]\nname = \"mixed\"\ncount = 1\nstate = \"rest\"\n"
      "noise = { choice = [\"quiet\", \"loud\"], weights = [3, 1] }\n"
      "[[sweep]]\nname = \"s\"\ncount = 1\nstate = \"rv_failure\"\n"
      "grid = { noise = [\"loud\", \"quiet\"], severity = [0.5] }\n");
  CHECK(r.noise_profiles.size() == 2);
  CHECK(r.noise_profiles.count("quiet") == 1);
  CHECK(r.populations[0].noise.names == std::vector<std::string>{"quiet"});
  CHECK(r.populations[1].noise.names == std::vector<std::string>{"quiet", "loud"});
  CHECK(r.populations[1].noise.weights == std::vector<double>{3, 1});
  CHECK(names(r) == std::vector<std::string>{"one", "mixed", "s_loud_sev0.5", "s_quiet_sev0.5"});
  CHECK(r.populations[2].noise.names == std::vector<std::string>{"loud"});
  SubjectSpec s = plan_record(r, 0);
  CHECK(s.noise_profile_name == "quiet");
  CHECK(s.noise_profile == r.noise_profiles.at("quiet"));
}

TEST_CASE("the recipe keeps its verbatim text and its SHA-256", "[recipe]") {
  const std::string path = test::demo_path();
  Recipe r = load_recipe(path);
  CHECK(r.path == path);
  std::FILE* f = std::fopen(path.c_str(), "rb");
  REQUIRE(f);
  std::string text;
  char buf[4096];
  for (std::size_t n; (n = std::fread(buf, 1, sizeof buf, f)) > 0;) text.append(buf, n);
  std::fclose(f);
  CHECK(r.text == text);
  // Reference: Python's hashlib.sha256 of the same file.
  const std::string cmd = std::string(std::getenv("STETHOGEN_PYTHON") ? std::getenv("STETHOGEN_PYTHON")
                                                                      : "/usr/bin/python3") +
                          " -c \"import hashlib,sys; print(hashlib.sha256(open(sys.argv[1],'rb')"
                          ".read()).hexdigest())\" '" + path + "'";
  std::FILE* py = popen(cmd.c_str(), "r");
  REQUIRE(py);
  char hex[128] = {0};
  REQUIRE(std::fgets(hex, sizeof hex, py));
  pclose(py);
  CHECK(r.sha256_hex + "\n" == std::string(hex));
}

TEST_CASE("the demo recipe validates and covers every state, grade and SNR band", "[recipe]") {
  Recipe r = load_recipe(test::demo_path());
  CHECK(r.noise_profiles.size() >= 2);
  CHECK(r.noise_profiles.size() <= 3);
  const std::uint64_t n = record_count(r);
  CHECK(n >= 30);
  CHECK(n <= 50);
  std::set<State> states;
  std::set<double> intensities, severities[5];
  double snr_lo = 1e9, snr_hi = -1e9, total_s = 0;
  for (std::uint64_t i = 0; i < n; ++i) {
    SubjectSpec s = plan_record(r, i);
    states.insert(s.state);
    if (s.state == State::exercise) intensities.insert(s.exercise_intensity);
    if (s.state != State::rest && s.state != State::exercise)
      severities[static_cast<int>(s.state)].insert(s.severity);
    REQUIRE(s.params.snr_db.has_value());
    snr_lo = std::min(snr_lo, *s.params.snr_db);
    snr_hi = std::max(snr_hi, *s.params.snr_db);
    CHECK(s.params.duration_s >= 10);
    CHECK(s.params.duration_s <= 20);
    total_s += s.params.duration_s;
  }
  CHECK(states.size() == 5);
  CHECK(intensities.size() >= 3);
  for (State f : {State::lv_failure, State::rv_failure, State::global_failure})
    CHECK(severities[static_cast<int>(f)].size() >= 3);
  CHECK(snr_lo <= 0);
  CHECK(snr_hi >= 25);
  CHECK(r.dataset.sample_rate_hz == 4000);
  // Small enough to generate quickly: under 15 minutes of audio in all.
  CHECK(total_s < 15 * 60);
}

TEST_CASE("a missing or unreadable recipe is an input error", "[recipe]") {
  CHECK_THROWS_AS(load_recipe("/nonexistent/recipe.toml"), InputError);
  CHECK_THROWS_WITH(load_recipe("/nonexistent/recipe.toml"),
                    Catch::Contains("/nonexistent/recipe.toml: cannot read recipe: no such file"));
  CHECK_THROWS_WITH(load_recipe(test::source_dir() + "/recipes"),
                    Catch::Contains("cannot read recipe: not a regular file"));
}

TEST_CASE("every example recipe in recipes/ validates", "[recipe]") {
  int n = 0;
  for (const auto& e : std::filesystem::directory_iterator(test::source_dir() + "/recipes")) {
    if (e.path().extension() != ".toml") continue;
    INFO(e.path().string());
    Recipe r = load_recipe(e.path().string());
    CHECK(record_count(r) > 0);
    ++n;
  }
  CHECK(n >= 2);
}

TEST_CASE("the grading example crosses 8 intensities and 5 severities with 3 SNRs", "[recipe]") {
  Recipe r = load_recipe(test::source_dir() + "/recipes/grades_by_snr.toml");
  std::size_t exercise = 0, failure = 0;
  for (const auto& p : r.populations) {
    exercise += p.sweep == "exercise";
    failure += p.sweep == "lvf" || p.sweep == "rvf" || p.sweep == "gf";
  }
  CHECK(exercise == 8 * 3);
  CHECK(failure == 3 * 5 * 3);
  CHECK(record_count(r) == 12 + (8 * 3 + 3 * 5 * 3) * 4);
}
