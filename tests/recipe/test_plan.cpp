#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <numeric>
#include <stdexcept>

#include "recipe/plan.hpp"
#include "recipe/recipe.hpp"
#include "recipe_test_util.hpp"

using namespace stethogen;
using namespace stethogen::recipe;
using stethogen::recipe::test::parse;

namespace {

// Three populations with every kind of distribution, noise choices and a sweep.
const char* kMixed =
    "[dataset]\nname = \"mix\"\nseed = 4242\nduration_s = { uniform = [5, 25] }\n"
    "[noise.a]\nsensor_white = { level_db = -10 }\n"
    "[noise.b]\nambient = { color = \"white\", level_db = 0 }\n"
    "[[population]]\nname = \"rest\"\ncount = 40\nstate = \"rest\"\n"
    "heart_rate_bpm = { normal = { mean = 70, sd = 10, min = 50, max = 110 } }\n"
    "snr_db = { uniform = [0, 30] }\nnoise = { choice = [\"a\", \"b\"], weights = [1, 2] }\n"
    "[[population]]\nname = \"lv\"\ncount = 25\nstate = \"lv_failure\"\n"
    "severity = { choice = [0.2, 0.5, 0.8] }\nchest_wall_mm = { uniform = [10, 40] }\n"
    "[[sweep]]\nname = \"ex\"\ncount = 5\nstate = \"exercise\"\nnoise = \"a\"\n"
    "grid = { intensity = [0.1, 0.9], snr_db = [0, 20] }\n";

void require_same(const SubjectSpec& a, const SubjectSpec& b) {
  INFO(a.record_id);
  REQUIRE(a.record_id == b.record_id);
  REQUIRE(a.record_index == b.record_index);
  REQUIRE(a.dataset_seed == b.dataset_seed);
  REQUIRE(a.population == b.population);
  REQUIRE(a.population_index == b.population_index);
  REQUIRE(a.state == b.state);
  REQUIRE(a.exercise_intensity == b.exercise_intensity);
  REQUIRE(a.severity == b.severity);
  REQUIRE(a.sites == b.sites);
  REQUIRE(a.noise_profile_name == b.noise_profile_name);
  const SubjectParams &p = a.params, &q = b.params;
  REQUIRE(p.duration_s == q.duration_s);
  REQUIRE(p.heart_rate_bpm == q.heart_rate_bpm);
  REQUIRE(p.snr_db == q.snr_db);
  REQUIRE(p.chest_wall_mm == q.chest_wall_mm);
  REQUIRE(p.respiration_rate_per_min == q.respiration_rate_per_min);
  REQUIRE(p.blood_volume_ml == q.blood_volume_ml);
}

}  // namespace

TEST_CASE("record ids are zero-padded to at least six digits", "[plan]") {
  CHECK(record_id(0) == "r000000");
  CHECK(record_id(42) == "r000042");
  CHECK(record_id(999999) == "r999999");
  CHECK(record_id(1234567) == "r1234567");
}

TEST_CASE("records are numbered population by population", "[plan]") {
  Recipe r = parse_recipe(kMixed, "mix.toml");
  REQUIRE(record_count(r) == 40 + 25 + 4 * 5);
  CHECK(population_of(r, 0) == 0);
  CHECK(population_of(r, 39) == 0);
  CHECK(population_of(r, 40) == 1);
  CHECK(population_of(r, 64) == 1);
  CHECK(population_of(r, 65) == 2);
  CHECK(plan_record(r, 84).population == "ex_i0.9_snr20");
  CHECK(plan_record(r, 84).population_index == 5);
  CHECK_THROWS_AS(plan_record(r, 85), std::out_of_range);
  SubjectSpec s = plan_record(r, 41);
  CHECK(s.record_id == "r000041");
  CHECK(s.state == State::lv_failure);
  CHECK(s.exercise_intensity == 0.0);
  CHECK(s.dataset_seed == 4242);
  CHECK(s.sample_rate_hz == 4000);
  CHECK_FALSE(s.params.snr_db.has_value());  // no SNR configured: no noise
  CHECK(s.noise_profile == nullptr);
}

TEST_CASE("the plan of a record does not depend on planning order or shard", "[plan]") {
  Recipe r = parse_recipe(kMixed, "mix.toml");
  const std::uint64_t n = record_count(r);
  std::vector<SubjectSpec> forward;
  for (std::uint64_t i = 0; i < n; ++i) forward.push_back(plan_record(r, i));
  // Reverse order.
  for (std::uint64_t i = n; i-- > 0;) require_same(plan_record(r, i), forward[i]);
  // Shard 2 of 3 (every third record, as a --shard K/N split would take them), from a freshly
  // parsed recipe as another process would.
  Recipe again = parse_recipe(kMixed, "elsewhere.toml");
  for (std::uint64_t i = 1; i < n; i += 3) require_same(plan_record(again, i), forward[i]);
}

TEST_CASE("a different seed gives a different plan", "[plan]") {
  std::string other = kMixed;
  other.replace(other.find("seed = 4242"), 11, "seed = 4243");
  Recipe a = parse_recipe(kMixed, "a.toml"), b = parse_recipe(other, "b.toml");
  int same_hr = 0, same_duration = 0;
  for (std::uint64_t i = 0; i < 40; ++i) {
    same_hr += plan_record(a, i).params.heart_rate_bpm == plan_record(b, i).params.heart_rate_bpm;
    same_duration += plan_record(a, i).params.duration_s == plan_record(b, i).params.duration_s;
  }
  CHECK(same_hr == 0);
  CHECK(same_duration == 0);
}

TEST_CASE("configuring one parameter leaves the draws of the others unchanged", "[plan]") {
  const std::string head = "[dataset]\nname = \"t\"\nseed = 99\nduration_s = { uniform = [5, 20] }\n"
                           "[[population]]\nname = \"p\"\ncount = 30\nstate = \"rest\"\n"
                           "heart_rate_bpm = { uniform = [50, 90] }\nsnr_db = { normal = { mean = 10, sd = 5 } }\n";
  Recipe base = parse_recipe(head, "a.toml");
  Recipe more = parse_recipe(head + "chest_wall_mm = { uniform = [10, 30] }\nrsa_fraction = { choice = [0.01, 0.05] }\n"
                                    "respiration_rate_per_min = { normal = { mean = 14, sd = 2 } }\n",
                             "b.toml");
  for (std::uint64_t i = 0; i < 30; ++i) {
    SubjectSpec a = plan_record(base, i), b = plan_record(more, i);
    REQUIRE(a.params.heart_rate_bpm == b.params.heart_rate_bpm);
    REQUIRE(a.params.snr_db == b.params.snr_db);
    REQUIRE(a.params.duration_s == b.params.duration_s);
    REQUIRE(a.params.chest_wall_mm == SubjectParams{}.chest_wall_mm);
    REQUIRE(b.params.chest_wall_mm != SubjectParams{}.chest_wall_mm);
  }
}

TEST_CASE("unconfigured parameters keep the subject defaults, fixed ones their value", "[plan]") {
  Recipe r = parse("[[population]]\nname = \"p\"\ncount = 2\nstate = \"exercise\"\nintensity = 0.6\n"
                   "blood_volume_ml = 4800\n");
  SubjectSpec s = plan_record(r, 1);
  const SubjectParams d;
  CHECK(s.exercise_intensity == 0.6);
  CHECK(s.params.blood_volume_ml == 4800);
  CHECK(s.params.duration_s == 30.0);  // the dataset default
  CHECK_FALSE(s.params.heart_rate_bpm.has_value());
  CHECK(s.params.respiration_rate_per_min == d.respiration_rate_per_min);
  CHECK(s.params.pr_interval_ms == d.pr_interval_ms);
  CHECK(s.params.source_variation == d.source_variation);
}

TEST_CASE("planned draws follow their distributions", "[plan]") {
  const std::uint64_t n = 20000;
  Recipe r = parse("[noise.a]\nsensor_white = { level_db = -10 }\n[noise.b]\nsensor_white = { level_db = -20 }\n"
                   "[[population]]\nname = \"p\"\ncount = 20000\nstate = \"rest\"\n"
                   "heart_rate_bpm = { normal = { mean = 70, sd = 10, min = 60, max = 120 } }\n"
                   "chest_wall_mm = { uniform = [10, 40] }\n"
                   "snr_db = { choice = [0, 10, 20], weights = [1, 2, 1] }\n"
                   "noise = { choice = [\"a\", \"b\"], weights = [1, 3] }\n");
  double hr_sum = 0, hr_sq = 0, wall_sum = 0, hr_min = 1e9, hr_max = -1e9;
  std::uint64_t snr10 = 0, noise_b = 0;
  for (std::uint64_t i = 0; i < n; ++i) {
    SubjectSpec s = plan_record(r, i);
    double hr = *s.params.heart_rate_bpm;
    hr_sum += hr;
    hr_sq += hr * hr;
    hr_min = std::min(hr_min, hr);
    hr_max = std::max(hr_max, hr);
    wall_sum += s.params.chest_wall_mm;
    snr10 += *s.params.snr_db == 10;
    noise_b += s.noise_profile_name == "b";
  }
  const double hr_mean = hr_sum / n, hr_sd = std::sqrt(hr_sq / n - hr_mean * hr_mean);
  CHECK(hr_min >= 60);
  CHECK(hr_max <= 120);
  // Reference: scipy.stats.truncnorm(a=-1, b=5, loc=70, scale=10).mean() = 72.87598 and
  // .std() = 7.93523. Tolerance: 5 standard errors of the mean (7.9/sqrt(20000) = 0.056).
  CHECK(hr_mean == Approx(72.87598).margin(5 * 7.93523 / std::sqrt(double(n))));
  CHECK(hr_sd == Approx(7.93523).margin(0.15));
  // Uniform on [10, 40]: mean 25, SD 30/sqrt(12); 5 standard errors.
  CHECK(wall_sum / n == Approx(25.0).margin(5 * 30 / std::sqrt(12.0) / std::sqrt(double(n))));
  // Weighted choices: binomial proportions 1/2 and 3/4; 5 standard errors.
  CHECK(double(snr10) / n == Approx(0.5).margin(5 * std::sqrt(0.25 / n)));
  CHECK(double(noise_b) / n == Approx(0.75).margin(5 * std::sqrt(0.75 * 0.25 / n)));
}

TEST_CASE("a recipe built in code, without the first-record index, plans the same", "[plan]") {
  Recipe parsed = parse_recipe(kMixed, "mix.toml");
  Recipe built = parsed;
  built.first_record.clear();
  REQUIRE(record_count(built) == record_count(parsed));
  for (std::uint64_t i = 0; i < record_count(parsed); ++i) {
    REQUIRE(population_of(built, i) == population_of(parsed, i));
    require_same(plan_record(built, i), plan_record(parsed, i));
  }
  CHECK_THROWS_AS(population_of(built, record_count(built)), std::out_of_range);
}
