// Writing, as `generate` does it (bundle/generate.cpp): each record's chunks filtered and staged
// (encode_record, stage_record), on a synthesis thread there; the staged record written into the
// bundle and its scratch file saved (the single HDF5 thread); the bundle finished (its index,
// flush, close, rename). Thread CPU time of each step, and the final file's size.
#include <filesystem>

#include <fmt/format.h>

#include "bench/bench.hpp"
#include "bundle/chunk_codec.hpp"
#include "bundle/scratch_file.hpp"
#include "bundle/staged_record.hpp"
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
  const bundle::StagingSettings settings = bundle::staging_settings(attributes);
  const fs::path dir = fs::path(scratch_dir) / fmt::format("writing-{}", name(compression));
  fs::remove_all(dir);
  fs::create_directories(dir);
  const fs::path final_path = dir / "bundle.h5";
  bundle::WriterOptions options;
  options.overwrite = true;
  options.temp_path = dir / "bundle.h5.partial";
  const double c0 = thread_cpu_s();
  bundle::BundleWriter writer(final_path, attributes, options);
  t.store_s += thread_cpu_s() - c0;
  std::vector<std::vector<unsigned char>> batch;
  for (std::size_t i = 0; i < records.size(); ++i) {
    const Record& r = records[i];
    const double c1 = thread_cpu_s();
    bundle::ScratchEntry entry;
    entry.record = bundle::stage_record(
        r, bundle::encode_record(r, bundle::RecordParts::all(), settings.sample_format, settings.compression),
        bundle::RecordParts::all(), settings);
    const double c2 = thread_cpu_s();
    writer.write_staged(*entry.record, &entry.chunk_offsets);
    // generate saves a scratch file per quarter second of records: about 8 records of 30 s.
    batch.push_back(bundle::scratch_bytes(entry));
    if (batch.size() == 8 || i + 1 == records.size()) {
      bundle::save_scratch(dir / fmt::format("rec-{:012}.stg", i + 1 - batch.size()), batch);
      batch.clear();
    }
    const double c3 = thread_cpu_s();
    t.encode_s += c2 - c1;
    t.store_s += c3 - c2;
    t.audio_s += r.sample_rate_hz > 0 ? double(r.pcg.n_samples) / r.sample_rate_hz : 0.0;
  }
  const double c4 = thread_cpu_s();
  writer.finish();
  t.assemble_s = thread_cpu_s() - c4;
  t.bytes = fs::file_size(final_path);
  t.records = records.size();
  fs::remove_all(dir);
  return t;
}

}  // namespace stethogen::bench
