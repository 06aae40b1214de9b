// Benchmark (hidden, run with `test_bundle "[.benchmark]"`): write throughput and size per audio
// hour of the bundle writer for each sample format, re-writing the records of an existing bundle
// given in STETHOGEN_BENCH_BUNDLE. Prints figures; asserts nothing about speed.
#include <catch2/catch.hpp>

#include <chrono>
#include <cstdlib>
#include <filesystem>
#include <iostream>

#include <fmt/format.h>

#include "bundle/reader.hpp"
#include "bundle/writer.hpp"
#include "temp_dir.hpp"

using namespace stethogen;
using namespace stethogen::bundle;
namespace fs = std::filesystem;

TEST_CASE("bundle writer throughput per sample format", "[.benchmark]") {
  const char* source = std::getenv("STETHOGEN_BENCH_BUNDLE");
  if (!source) {
    WARN("set STETHOGEN_BENCH_BUNDLE to a bundle (e.g. from recipes/demo.toml) to run this benchmark");
    return;
  }
  BundleReader reader(source);
  std::vector<Record> records;
  double audio_h = 0;
  for (const std::string& id : reader.record_ids()) {
    records.push_back(reader.read_record(id));
    audio_h += double(records.back().pcg.n_samples) / records.back().sample_rate_hz / 3600.0;
  }
  test::TempDir dir;
  for (SampleFormat format : kAllSampleFormats) {
    BundleAttributes a = reader.attributes();
    a.sample_format = format;
    const fs::path out = dir.path() / "bench.h5";
    fs::remove(out);
    auto t0 = std::chrono::steady_clock::now();
    {
      BundleWriter w(out, a);
      for (const Record& r : records) w.write_record(r);
      w.finish();
    }
    double s = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
    std::cout << fmt::format("{:8s}: {:7.1f} MB per audio hour, {:6.3f} audio hours written per second ({} records, {:.3f} h)\n",
                             name(format), fs::file_size(out) / audio_h / 1e6, audio_h / s, records.size(), audio_h);
  }
}
