// Adapter-internal: the reader's open file, shared with the writer for raw record copies.
#pragma once

#include <map>

#include "bundle/hdf5_io.hpp"
#include "bundle/reader.hpp"

namespace stethogen::bundle {

struct BundleReader::Impl {
  std::filesystem::path path;
  h5::Id file;
  BundleAttributes attributes;
  std::vector<IndexRow> index;
  std::vector<SkippedRecord> skipped;
  std::map<std::string, std::size_t> position;  // record id -> index row

  const IndexRow* row(const std::string& id) const {
    auto it = position.find(id);
    return it == position.end() ? nullptr : &index[it->second];
  }
};

}  // namespace stethogen::bundle
