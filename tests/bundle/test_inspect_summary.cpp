// The inspect summary as a pure function of the index, and the verify sample selection.
#include <catch2/catch.hpp>

#include <cmath>

#include <fmt/format.h>

#include "bundle/inspect.hpp"
#include "bundle/verify.hpp"

using namespace stethogen::bundle;

namespace {

std::vector<IndexRow> rows_of(const std::vector<std::pair<std::string, double>>& population_snr) {
  std::vector<IndexRow> rows;
  for (std::size_t i = 0; i < population_snr.size(); ++i) {
    IndexRow r;
    r.record_id = fmt::format("r{:06d}", i);
    r.record_index = i;
    r.population = population_snr[i].first;
    r.state = r.population == "calm" ? "rest" : "exercise";
    r.snr_db = population_snr[i].second;
    r.duration_s = 30;
    r.n_sites = 4;
    r.heart_rate_bpm = 60 + static_cast<double>(i);
    r.sample_rate_hz = 2000;
    rows.push_back(r);
  }
  return rows;
}

}  // namespace

TEST_CASE("dataset summary counts populations, hours, ranges and the SNR histogram", "[inspect]") {
  const double nan = std::nan("");
  const auto rows = rows_of({{"calm", 3.2}, {"calm", 7.9}, {"brisk", 12.5}, {"calm", nan}, {"brisk", 14.0}});
  const DatasetSummary s = summarize_dataset(BundleAttributes{}, rows, 1, 12345);
  CHECK(s.records == 5);
  CHECK(s.skipped == 1);
  // 5 records of 30 s = 150 s; 4 sites each.
  CHECK(s.audio_hours == Approx(150.0 / 3600.0));
  CHECK(s.site_audio_hours == Approx(600.0 / 3600.0));
  REQUIRE(s.populations.size() == 2);
  CHECK(s.populations[0].name == "calm");
  CHECK(s.populations[0].records == 3);
  CHECK(s.populations[0].state == "rest");
  CHECK(s.populations[1].records == 2);
  // SNR 3.2 .. 14.0 spans 12 one-dB bins starting at 3 dB; the NaN counts as "no noise".
  CHECK(s.snr.bin_width_db == 1.0);
  CHECK(s.snr.lo_db.front() == 3.0);
  CHECK(s.snr.counts.size() == 12);
  CHECK(s.snr.no_noise == 1);
  std::uint64_t total = 0;
  for (auto c : s.snr.counts) total += c;
  CHECK(total == 4);
  const ColumnRange* hr = nullptr;
  for (const ColumnRange& r : s.ranges)
    if (r.column == "heart_rate_bpm") hr = &r;
  REQUIRE(hr);
  CHECK(hr->min == 60);
  CHECK(hr->max == 64);
  const nlohmann::json j = summary_json(s);
  CHECK(j["records"] == 5);
  CHECK(j["populations"][0]["records"] == 3);
  CHECK(j["ranges"]["snr_db"]["finite"] == 4);
  CHECK(format_summary(s).find("no noise") != std::string::npos);
}

TEST_CASE("histogram widens its bins to stay readable", "[inspect]") {
  std::vector<double> snr;
  for (int i = 0; i <= 40; ++i) snr.push_back(-10.0 + i);  // -10 .. 30 dB
  const SnrHistogram h = snr_histogram(snr, 12);
  CHECK(h.bin_width_db == 5.0);
  CHECK(h.lo_db.front() == -10.0);
  CHECK(h.counts.size() == 9);
  CHECK(h.counts.back() == 1);  // 30 dB opens the last bin [30, 35)
}

TEST_CASE("regeneration sample spreads over populations deterministically", "[verify]") {
  std::vector<std::pair<std::string, double>> spec;
  for (int i = 0; i < 10; ++i) spec.emplace_back("calm", 0.0);
  for (int i = 0; i < 2; ++i) spec.emplace_back("brisk", 0.0);
  const auto rows = rows_of(spec);
  const std::vector<std::string> three = regeneration_sample(rows, 3);
  REQUIRE(three.size() == 3);
  CHECK(three == regeneration_sample(rows, 3));
  // Both populations appear; the calm picks sit at slice centres 2 and 7 of 0..9.
  CHECK(three[0] == rows[2].record_id);
  CHECK(three[1] == rows[11].record_id);
  CHECK(three[2] == rows[7].record_id);
  CHECK(regeneration_sample(rows, 100).size() == rows.size());
  CHECK(regeneration_sample(rows, 0).empty());
}
