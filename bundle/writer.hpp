// BundleWriter: the single place that creates bundle files (format: docs/bundle-format.md).
// Writes to a temporary name beside the target and renames on finish(), so a target path only
// ever holds a complete bundle. Not thread-safe: one writer thread (HDF5 is built serial).
#pragma once

#include <filesystem>
#include <memory>
#include <string>
#include <vector>

#include "bundle/index_row.hpp"
#include "core/record.hpp"

namespace stethogen::bundle {

class BundleReader;
struct EncodedRecord;
struct StagedRecord;

struct WriterOptions {
  // Temporary file; empty = "<target>.partial". Must be on the target's file system.
  std::filesystem::path temp_path;
  // Replace an existing target on finish(). Without it the constructor refuses an existing
  // target (InputError) and finish() re-checks before renaming.
  bool overwrite = false;
  // Flush the file to disk before the rename (off for a run's scratch files, which only need
  // to survive the process, not a power cut).
  bool durable = true;
  // Keep the temporary file (closed) when abandoned or when finish() fails: a run's scratch files
  // point at the chunks in it (bundle/scratch_file.hpp), from which --resume rebuilds the records.
  bool keep_temp = false;
};

class BundleWriter {
 public:
  // Creates the temporary file and writes the root attributes. Throws InputError if the target
  // exists and !options.overwrite, RuntimeFailure if the file cannot be created.
  BundleWriter(const std::filesystem::path& target, const BundleAttributes& attributes,
               const WriterOptions& options = {});
  ~BundleWriter();  // abandons an unfinished file
  BundleWriter(const BundleWriter&) = delete;
  BundleWriter& operator=(const BundleWriter&) = delete;

  // Appends /records/<id>. record_id_override (non-empty) renames the record, in the group name
  // and in its /index row. pcg is stored in attributes.sample_format. Throws RuntimeFailure
  // naming the dataset on a write error (disk full), InputError for a duplicate id.
  void write_record(const Record& record, const RecordParts& parts = RecordParts::all(),
                    const std::string& record_id_override = {});
  // The same with the chunked arrays already filtered (encode_record with this bundle's
  // sample_format and compression, e.g. on a synthesis thread): only HDF5 bookkeeping is left.
  void write_record(const Record& record, const EncodedRecord& encoded, const RecordParts& parts = RecordParts::all(),
                    const std::string& record_id_override = {});

  // Appends a record staged for this bundle (stage_record with staging_settings of its attributes).
  // chunk_offsets (if given) gets the byte offset in the file of each of the record's chunks, in
  // the order of its objects and their chunks; the chunks are in the file when this returns.
  void write_staged(const StagedRecord& record, std::vector<std::uint64_t>* chunk_offsets = nullptr);

  // Copies /records/<record_id> of another bundle unchanged (raw compressed chunks) and its
  // /index row: merging shards this way gives the same bytes as writing the records directly.
  void copy_record(const BundleReader& source, const std::string& record_id);

  // Notes a record the run skipped; written to /skipped by finish().
  void add_skipped(const SkippedRecord& skipped);

  // Writes a caller-defined table of fixed-length strings as a compound dataset at an absolute
  // path outside /records and /index (e.g. "/key/id_map"); groups are created as needed.
  void write_string_table(const std::string& path, const StringTable& table);

  // Writes /index (rows in the order written) and /skipped, closes the file and renames it to
  // the target. Throws RuntimeFailure on a write error, after removing the temporary file.
  void finish();
  // Closes and deletes the temporary file (keeps it under keep_temp); the target is untouched.
  // Never throws.
  void abandon() noexcept;

  std::size_t records_written() const;
  const std::filesystem::path& target() const;
  const std::filesystem::path& temp_path() const;

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

// Most samples per chunk along the sample axis (a signal is split evenly: balanced_chunk), and
// the gzip level of compression = "compact" (chosen by measurement, docs/bundle-format.md).
inline constexpr std::size_t kPcgChunkSamples = 16384;
inline constexpr int kGzipLevel = 4;
// Half the fan-out of the chunk-index B-tree nodes (HDF5's istore_k; its default is 32).
inline constexpr unsigned kChunkIndexK = 8;

// The state a public bundle (content = "public", made by split) stores for every record.
inline constexpr const char* kWithheldState = "withheld";

// Full-scale integer of each integer storage: stored = round(value / scale), scale = 1 / full.
inline constexpr std::int32_t kInt16FullScale = 32767;
inline constexpr std::int32_t kInt24FullScale = 8388607;

}  // namespace stethogen::bundle
