// Writing, as `generate` does it (bundle/generate.cpp): each record's chunks filtered
// (encode_record, on a synthesis thread there), stored as a one-record scratch bundle (the single
// HDF5 thread), and all scratch bundles assembled into the final file (merge_bundles, H5Ocopy of
// the raw chunks). Thread CPU time of each step, and the final file's size.
#include <filesystem>

#include <fmt/format.h>

#include "bench/bench.hpp"
#include "bundle/chunk_codec.hpp"
#include "bundle/merge.hpp"
#include "bundle/writer.hpp"

namespace stethogen::bench {

namespace fs = std::filesystem;

WritingTimes time_writing(const std::vector<Record>& records, const recipe::Recipe& recipe, Compression compression,
                          const std::string& scratch_dir) {
  WritingTimes t;
  bundle::BundleAttributes attributes;
  attributes.recipe_toml = recipe.text;
  attributes.recipe_sha256 = recipe.sha256_hex;
  attributes.seed = recipe.dataset.seed;
  attributes.record_count = records.size();
  attributes.sample_format = recipe.dataset.sample_format;
  attributes.compression = compression;
  const fs::path dir = fs::path(scratch_dir) / fmt::format("writing-{}", name(compression));
  fs::remove_all(dir);
  fs::create_directories(dir);
  std::vector<fs::path> parts;
  for (std::size_t i = 0; i < records.size(); ++i) {
    const Record& r = records[i];
    const double c0 = thread_cpu_s();
    const bundle::EncodedRecord encoded =
        bundle::encode_record(r, bundle::RecordParts::all(), attributes.sample_format, compression);
    const double c1 = thread_cpu_s();
    parts.push_back(dir / fmt::format("rec-{:012}.h5", i));
    bundle::WriterOptions options;
    options.overwrite = true;
    options.durable = false;
    bundle::BundleWriter writer(parts.back(), attributes, options);
    writer.write_record(r, encoded);
    writer.finish();
    const double c2 = thread_cpu_s();
    t.encode_s += c1 - c0;
    t.store_s += c2 - c1;
    t.audio_s += r.sample_rate_hz > 0 ? double(r.pcg.n_samples) / r.sample_rate_hz : 0.0;
  }
  const fs::path final_path = dir / "bundle.h5";
  bundle::MergeSpec spec;
  spec.expect = bundle::RecordRange{0, records.size()};
  spec.overwrite = true;
  const double c3 = thread_cpu_s();
  bundle::merge_bundles(parts, final_path, spec);
  t.assemble_s = thread_cpu_s() - c3;
  t.bytes = fs::file_size(final_path);
  t.records = records.size();
  fs::remove_all(dir);
  return t;
}

}  // namespace stethogen::bench
