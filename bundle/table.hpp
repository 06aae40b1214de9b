// A small columnar table: the in-memory form of the bundle's compound datasets (/index, events,
// beats, artifacts, /skipped, string tables). HDF5-free; hdf5_io.cpp maps it to packed compound
// types, one member per column in column order.
#pragma once

#include <cstdint>
#include <stdexcept>
#include <string>
#include <vector>

namespace stethogen::bundle {

enum class ColumnKind { i8, u8, i32, i64, u64, f64, str };

struct Column {
  std::string name;
  ColumnKind kind = ColumnKind::f64;
  std::string unit;                   // "" = dimensionless or a name/label
  std::vector<std::int64_t> ints;     // integer kinds (u64 values below 2^63)
  std::vector<double> reals;          // f64
  std::vector<std::string> strings;   // str: fixed-length, width = longest value (at least 1)

  std::size_t size() const {
    return kind == ColumnKind::f64 ? reals.size() : kind == ColumnKind::str ? strings.size() : ints.size();
  }
};

struct Table {
  std::vector<Column> columns;

  Column& add(std::string name, ColumnKind kind, std::string unit = {}) {
    columns.push_back(Column{std::move(name), kind, std::move(unit), {}, {}, {}});
    return columns.back();
  }
  std::size_t rows() const { return columns.empty() ? 0 : columns.front().size(); }

  const Column* find(const std::string& name) const {
    for (const Column& c : columns)
      if (c.name == name) return &c;
    return nullptr;
  }
  const Column& at(const std::string& name) const {
    if (const Column* c = find(name)) return *c;
    throw std::out_of_range("no column '" + name + "'");
  }
  // Typed accessors by name; a missing column gives the fallback (older minor versions).
  std::int64_t integer(const std::string& name, std::size_t row, std::int64_t fallback = 0) const {
    const Column* c = find(name);
    return c && !c->ints.empty() ? c->ints.at(row) : fallback;
  }
  double real(const std::string& name, std::size_t row, double fallback = 0) const {
    const Column* c = find(name);
    if (!c) return fallback;
    return c->kind == ColumnKind::f64 ? c->reals.at(row) : static_cast<double>(c->ints.at(row));
  }
  std::string string(const std::string& name, std::size_t row) const {
    const Column* c = find(name);
    return c && c->kind == ColumnKind::str ? c->strings.at(row) : std::string{};
  }
};

}  // namespace stethogen::bundle
