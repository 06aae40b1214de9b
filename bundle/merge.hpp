// Joining bundles of one recipe (shards of a cluster run, or the segments of one run) into one
// bundle with records in record-index order. Records are copied raw, so the result has the same
// bytes as writing the records in one go.
#pragma once

#include <filesystem>
#include <optional>
#include <vector>

#include "bundle/shard.hpp"

namespace stethogen::bundle {

struct MergeSpec {
  // Record indices the inputs must cover exactly (records + skipped); default: the whole dataset.
  std::optional<RecordRange> expect;
  Shard shard;                         // recorded in the output's root attributes when count > 1
  bool overwrite = false;              // replace an existing output
  std::filesystem::path temp_path;     // empty: "<output>.partial"
};

// Throws InputError for inputs from different recipes or sample formats, duplicate or missing
// records (naming them), or an existing output without overwrite.
void merge_bundles(const std::vector<std::filesystem::path>& inputs, const std::filesystem::path& output,
                   const MergeSpec& spec);

}  // namespace stethogen::bundle
