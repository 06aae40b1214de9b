// BundleReader: opens a bundle (docs/bundle-format.md) and reads records whole or in parts.
// Every read names the file, record and dataset in its error. A damaged chunk (Fletcher32
// mismatch, broken compression) is a RuntimeFailure naming the dataset. Not thread-safe: use a
// reader from one thread at a time (the adapter serialises all HDF5 calls internally).
#pragma once

#include <cstdint>
#include <filesystem>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "bundle/index_row.hpp"
#include "core/record.hpp"

namespace stethogen::bundle {

// pcg or pcg_clean as stored: float32 samples, or integers with their scale
// (value = integer * scale). Exporters use the integers to write exact 16/24-bit audio.
struct StoredPcg {
  SampleFormat format = SampleFormat::float32;
  double scale = 1.0;                 // 1 for float32
  SiteArray<float> samples;           // always filled: value in sensor full-scale units
  SiteArray<std::int32_t> integers;   // filled for int16 / int24 only
};

// Shape, element type and attributes of one dataset, for schema checks.
struct DatasetInfo {
  std::string path;
  std::string dtype;                     // "float32", "float64", "int16", "int32", "int64",
                                         // "uint8", "uint64", "string", "compound"
  std::vector<std::uint64_t> shape;
  std::vector<std::string> fields;       // compound member names, in order
  std::vector<std::string> attributes;   // attribute names
  bool fletcher32 = false;
  bool gzip = false;
};

class BundleReader {
 public:
  // Opens and checks the root: format name and major version. Throws InputError (naming the
  // file) for a missing file, a non-HDF5 or truncated file, another format or major version.
  explicit BundleReader(const std::filesystem::path& path);
  ~BundleReader();
  BundleReader(BundleReader&&) noexcept;
  BundleReader& operator=(BundleReader&&) noexcept;

  const std::filesystem::path& path() const;
  const BundleAttributes& attributes() const;
  // /index rows in file order (record order).
  const std::vector<IndexRow>& index() const;
  std::vector<std::string> record_ids() const;
  const std::vector<SkippedRecord>& skipped() const;
  bool has_record(const std::string& record_id) const;
  // Which truth parts the record carries.
  RecordParts parts(const std::string& record_id) const;

  // Everything stored about a record. Parts the file lacks stay empty. record.subject holds
  // the fields the bundle keeps (ids, population, state, intensity, severity, rate, sites,
  // sensor, sample format, duration, drawn SNR). Throws InputError for an unknown id.
  Record read_record(const std::string& record_id) const;

  // Cheap partial reads.
  SiteArray<float> read_pcg(const std::string& record_id) const;
  StoredPcg read_pcg_stored(const std::string& record_id, bool clean = false) const;
  SiteArray<std::uint8_t> read_states(const std::string& record_id) const;
  std::vector<Event> read_events(const std::string& record_id) const;
  std::vector<BeatRow> read_beats(const std::string& record_id) const;
  std::vector<Artifact> read_artifacts(const std::string& record_id) const;
  HemodynamicTraces read_hemodynamics(const std::string& record_id) const;
  std::vector<Site> sites(const std::string& record_id) const;
  int sample_rate_hz(const std::string& record_id) const;

  // A table written by BundleWriter::write_string_table; std::nullopt if absent.
  std::optional<StringTable> read_string_table(const std::string& path) const;

  // Schema introspection: names of the members of a group ("/" , "/records/r000001"), and
  // the description of a dataset; std::nullopt if the path is not a dataset.
  std::vector<std::string> list_group(const std::string& path) const;
  std::optional<DatasetInfo> dataset_info(const std::string& path) const;
  // Attribute names of a group or dataset ("/" for the root); empty if the path is absent.
  std::vector<std::string> attribute_names(const std::string& path) const;
  // Reads every dataset of a record in full, so checksum and decompression errors surface;
  // throws RuntimeFailure naming the record and dataset of the first damaged one.
  void check_record_data(const std::string& record_id) const;

 struct Impl;  // adapter-internal (bundle/reader_impl.hpp)

 private:
  friend class BundleWriter;
  std::unique_ptr<Impl> impl_;
};

}  // namespace stethogen::bundle
