// The /index rows a writer has stored so far, kept in an unnamed temporary file rather than in
// memory, so that the writer's memory does not grow with the record count (issue 9); read back
// in blocks when finish() writes the table. HDF5-free.
#pragma once

#include <cstdio>
#include <filesystem>
#include <functional>
#include <vector>

#include "bundle/index_row.hpp"

namespace stethogen::bundle {

class IndexSpill {
 public:
  // Creates the file in `directory` and unlinks it at once: nothing is left behind, even after a
  // crash. Throws RuntimeFailure if it cannot be created.
  explicit IndexSpill(const std::filesystem::path& directory);
  ~IndexSpill();
  IndexSpill(const IndexSpill&) = delete;
  IndexSpill& operator=(const IndexSpill&) = delete;

  // Throws RuntimeFailure on a write error (disk full).
  void append(const IndexRow& row);
  std::size_t size() const { return rows_; }
  // A row whose every string column holds the longest value appended to it: the table's widths.
  const IndexRow& widest() const { return widest_; }
  // Calls `block` with consecutive runs of at most block_rows rows, in the order appended.
  void read_blocks(std::size_t block_rows, const std::function<void(const std::vector<IndexRow>&)>& block);

 private:
  std::FILE* file_ = nullptr;
  std::filesystem::path directory_;
  std::size_t rows_ = 0;
  IndexRow widest_;
};

}  // namespace stethogen::bundle
