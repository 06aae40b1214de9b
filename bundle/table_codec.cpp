#include "bundle/table_codec.hpp"

#include <algorithm>
#include <cstdint>
#include <cstring>
#include <stdexcept>

namespace stethogen::bundle {

namespace {

std::size_t member_bytes(const Column& c) {
  switch (c.kind) {
    case ColumnKind::i8:
    case ColumnKind::u8: return 1;
    case ColumnKind::i32: return 4;
    case ColumnKind::i64:
    case ColumnKind::u64:
    case ColumnKind::f64: return 8;
    case ColumnKind::str: break;
  }
  std::size_t w = 1;
  for (const std::string& s : c.strings) w = std::max(w, s.size());
  return w;
}

template <typename T>
void put(unsigned char* dst, T v) {
  std::memcpy(dst, &v, sizeof v);
}

}  // namespace

std::vector<TableMember> table_members(const Table& table) {
  std::vector<TableMember> members;
  std::size_t offset = 0;
  for (const Column& c : table.columns) {
    members.push_back({c.name, c.kind, offset, member_bytes(c)});
    offset += members.back().bytes;
  }
  return members;
}

std::size_t row_bytes(const std::vector<TableMember>& members) {
  return members.empty() ? 1 : std::max<std::size_t>(members.back().offset + members.back().bytes, 1);
}

std::vector<unsigned char> pack_rows(const Table& table, const std::vector<TableMember>& members) {
  const std::size_t n = table.rows(), size = row_bytes(members);
  std::vector<unsigned char> buf(n * size, 0);
  for (std::size_t ci = 0; ci < table.columns.size(); ++ci) {
    const Column& c = table.columns[ci];
    if (c.size() != n) throw std::logic_error("table: ragged column " + c.name);
    for (std::size_t r = 0; r < n; ++r) {
      unsigned char* dst = buf.data() + r * size + members[ci].offset;
      switch (c.kind) {
        case ColumnKind::i8: put(dst, static_cast<std::int8_t>(c.ints[r])); break;
        case ColumnKind::u8: put(dst, static_cast<std::uint8_t>(c.ints[r])); break;
        case ColumnKind::i32: put(dst, static_cast<std::int32_t>(c.ints[r])); break;
        case ColumnKind::i64: put(dst, static_cast<std::int64_t>(c.ints[r])); break;
        case ColumnKind::u64: put(dst, static_cast<std::uint64_t>(c.ints[r])); break;
        case ColumnKind::f64: put(dst, c.reals[r]); break;
        case ColumnKind::str:
          if (c.strings[r].size() > members[ci].bytes) throw std::logic_error("table: string wider than column " + c.name);
          std::memcpy(dst, c.strings[r].data(), c.strings[r].size());
          break;
      }
    }
  }
  return buf;
}

EncodedTable encode_table(const Table& table, const ChunkFilters& filters) {
  EncodedTable out;
  out.members = table_members(table);
  for (const Column& c : table.columns) out.units.push_back(c.unit);
  const std::vector<unsigned char> buf = pack_rows(table, out.members);
  out.rows = encode_elements(buf.data(), 1, table.rows(), true, StoredType::packed, row_bytes(out.members),
                             kTableChunkRows, filters);
  return out;
}

}  // namespace stethogen::bundle
