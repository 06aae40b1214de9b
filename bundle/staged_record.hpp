// One record exactly as BundleWriter stores it, HDF5-free: its group's attributes, then its groups
// and datasets in creation order, each dataset's chunks already filtered. Built on a synthesis
// thread (stage_record), saved as the run's scratch file (bundle/scratch_file.hpp) and replayed
// into the bundle by the single HDF5 thread (BundleWriter::write_staged). Because the bundle is
// written from this form alone, a record written straight from memory and one read back from
// its scratch file after an interruption give the same bytes.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "bundle/chunk_codec.hpp"
#include "bundle/index_row.hpp"
#include "bundle/table_codec.hpp"
#include "core/record.hpp"

namespace stethogen::bundle {

// An attribute: a string, a list of strings, a scalar (i32, i64, u64 kept as bits, f64) or a
// list of i32. Strings are stored variable-length UTF-8.
struct StagedAttribute {
  enum class Kind : unsigned char { str, strs, i32, i64, u64, f64, i32s };
  std::string name;
  Kind kind = Kind::str;
  std::vector<std::string> strings;
  std::vector<std::int64_t> ints;
  double real = 0;
};

// A group (no data) or a dataset, at a path relative to the record's group ("pcg",
// "hemodynamics/lv_pressure_mmhg"). A table dataset has members (a packed compound).
struct StagedObject {
  bool group = false;
  std::string path;
  EncodedArray data;
  std::vector<TableMember> members;
  std::vector<StagedAttribute> attributes;
};

struct StagedRecord {
  IndexRow row;  // its /index row; row.record_id names the group
  std::vector<StagedAttribute> attributes;
  std::vector<StagedObject> objects;
};

// What the bundle records about its storage, which the record's form depends on.
struct StagingSettings {
  SampleFormat sample_format = SampleFormat::float32;
  Compression compression = Compression::fast;
  bool public_content = false;  // a public (blinded) bundle's records read state "withheld"
};

// The settings of a bundle with these root attributes.
StagingSettings staging_settings(const BundleAttributes& attributes);

// The record as BundleWriter writes it; record_id (non-empty) renames it. `encoded` must come
// from encode_record with the same sample format and compression (std::logic_error otherwise).
StagedRecord stage_record(const Record& record, EncodedRecord encoded, const RecordParts& parts,
                          const StagingSettings& settings, const std::string& record_id = {});

// The filters of a table (index, events, ...) in a bundle of this compression.
ChunkFilters table_filters(Compression compression);

}  // namespace stethogen::bundle
