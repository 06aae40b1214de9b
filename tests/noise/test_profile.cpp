// Recipe noise-profile parsing: defaults, typed values, and the messages bad input gets.
#include <catch2/catch.hpp>

#include <toml++/toml.h>

#include "core/error.hpp"
#include "noise/profile.hpp"

using namespace stethogen;
using namespace stethogen::noise;

namespace {

NoiseProfile parse(const std::string& text, const std::string& file = "/tmp/recipe.toml") {
  toml::table doc = toml::parse(text, file);
  return parse_noise_profile(*doc["noise"]["clinic"].as_table(), "noise.clinic", file);
}

std::string error_of(const std::string& text) {
  try {
    parse(text);
  } catch (const InputError& e) {
    return e.what();
  }
  return "no error";
}

}  // namespace

TEST_CASE("a profile enables the processes it names and keeps their defaults otherwise") {
  auto p = parse(R"(
[noise.clinic]
sensor_white = { level_db = -12 }
ambient = { color = "band", band_hz = [100, 300] }
hum = { frequency_hz = 60, harmonics = 2 }
)");
  CHECK(p.name == "clinic");
  CHECK(p.sensor_white.enabled);
  CHECK(p.sensor_white.level_db == -12);
  CHECK(p.ambient.color == NoiseColor::band);
  CHECK(p.ambient.band_hz.lo == 100);
  CHECK(p.ambient.band_hz.hi == 300);
  CHECK(p.hum.frequency_hz == 60);
  CHECK(p.hum.harmonics == 2);
  CHECK(p.hum.level_db == HumNoise{}.level_db);
  CHECK_FALSE(p.breath.enabled);
  CHECK_FALSE(p.dropout.enabled);

  auto q = parse(R"(
[noise.clinic]
sensor_white = { }
breath = { enabled = false, corner_hz = 250 }
[noise.clinic.friction]
rate_per_min = 4
duration_ms = [20, 80]
)");
  CHECK(q.sensor_white.enabled);
  CHECK(q.sensor_white.level_db == SensorNoise{}.level_db);
  CHECK_FALSE(q.breath.enabled);
  CHECK(q.friction.enabled);
  CHECK(q.friction.rate_per_min == 4);
  CHECK(q.friction.duration_ms.lo == 20);
  CHECK(q.friction.duration_ms.hi == 80);
}

TEST_CASE("bad values are refused with file, line, column, key, value and what is allowed") {
  CHECK(error_of("[noise.clinic]\nhum = { frequency_hz = 55 }\n") ==
        "/tmp/recipe.toml:2:24: noise.clinic.hum.frequency_hz = 55: must be 50 or 60");
  CHECK_THAT(error_of("[noise.clinic]\nambient = { colr = \"pink\" }\n"),
             Catch::Contains("2:13: noise.clinic.ambient.colr: unknown key (did you mean 'color'?)"));
  CHECK_THAT(error_of("[noise.clinic]\nfriction = { rate_per_min = -1 }\n"),
             Catch::Contains("2:29: noise.clinic.friction.rate_per_min = -1: must be >= 0"));
  CHECK_THAT(error_of("[noise.clinic]\nambient = { color = \"band\", band_hz = [400, 100] }\n"),
             Catch::Contains("noise.clinic.ambient.band_hz = [400, 100]: impossible range"));
  CHECK_THAT(error_of("[noise.clinic]\nsensor_white = { level_db = \"loud\" }\n"),
             Catch::Contains("noise.clinic.sensor_white.level_db = 'loud': must be a number"));
  CHECK_THAT(error_of("[noise.clinic]\nambient = { color = \"pnk\" }\n"),
             Catch::Contains("(did you mean 'pink'?)"));
  CHECK_THAT(error_of("[noise.clinic]\nhumm = { }\n"), Catch::Contains("(did you mean 'hum'?)"));
  CHECK_THAT(error_of("[noise.clinic]\ndropout = { }\n"), Catch::Contains("no additive noise process"));
  CHECK_THAT(error_of("[noise.clinic]\nmotion = { duration_ms = [10] }\n"),
             Catch::Contains("must be [lo, hi] in ms"));
}

TEST_CASE("rate-dependent limits are checked against the record's Nyquist frequency") {
  auto p = parse("[noise.clinic]\nambient = { color = \"band\", band_hz = [100, 1500] }\nhum = { harmonics = 40 }\n");
  CHECK_THROWS_WITH(validate_for_rate(p, 4000, "noise.clinic"), Catch::Contains("hum.harmonics = 40"));
  p.hum.harmonics = 3;
  CHECK_NOTHROW(validate_for_rate(p, 4000, "noise.clinic"));
  p.hum.enabled = false;
  CHECK_THROWS_WITH(validate_for_rate(p, 2000, "noise.clinic"),
                    Catch::Contains("noise.clinic.ambient.band_hz = 1500: the upper band edge must be below the "
                                    "Nyquist frequency 1000 Hz"));
  p.hum.enabled = true;
  p.hum.harmonics = 40;
  CHECK_THROWS_WITH(validate_for_rate(p, 4000, "noise.clinic"),
                    Catch::Contains("noise.clinic.hum.harmonics = 40"));
}
