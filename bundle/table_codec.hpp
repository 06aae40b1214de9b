// A Table (bundle/table.hpp) as the bytes of a packed little-endian compound dataset, filtered
// into chunks like any other array (bundle/chunk_codec.hpp): one member per column in column
// order, fixed-length null-padded strings as wide as the column's longest value. HDF5-free, so a
// synthesis thread can do it; hdf5_io.cpp builds the matching compound type from the members.
#pragma once

#include <cstddef>
#include <string>
#include <vector>

#include "bundle/chunk_codec.hpp"
#include "bundle/table.hpp"

namespace stethogen::bundle {

struct TableMember {
  std::string name;
  ColumnKind kind = ColumnKind::f64;
  std::size_t offset = 0, bytes = 0;  // position and size within a row
  bool operator==(const TableMember&) const = default;
};

// Rows per chunk of a table.
inline constexpr std::size_t kTableChunkRows = 4096;

struct EncodedTable {
  std::vector<TableMember> members;
  std::vector<std::string> units;  // per column, the "units" attribute
  EncodedArray rows;               // 1-D, type packed, element_bytes = the row size
};

// Throws std::logic_error for a ragged table.
EncodedTable encode_table(const Table& table, const ChunkFilters& filters);

// The parts of encode_table, for a table written a block of rows at a time: the members of its
// rows (strings as wide as the column's longest value), the row size, and the rows of `table`
// packed by `members` (of a table with strings at least as wide; std::logic_error otherwise).
std::vector<TableMember> table_members(const Table& table);
std::size_t row_bytes(const std::vector<TableMember>& members);
std::vector<unsigned char> pack_rows(const Table& table, const std::vector<TableMember>& members);

}  // namespace stethogen::bundle
