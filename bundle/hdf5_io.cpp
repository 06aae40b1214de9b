#include "bundle/hdf5_io.hpp"

#include <algorithm>
#include <cstring>

#include <fmt/format.h>

#include "core/error.hpp"

namespace stethogen::bundle::h5 {

std::recursive_mutex& lock() {
  static std::recursive_mutex m;
  return m;
}

void init() {
  static std::once_flag once;
  std::call_once(once, [] {
    // HDF5's exit handler crashes closing a file whose flush failed (disk full); every file we
    // keep is closed explicitly, so the handler is not needed.
    H5dont_atexit();
    H5open();
    H5Eset_auto2(H5E_DEFAULT, nullptr, nullptr);
    // HDF5 keeps freed blocks on free lists, one list per block size, up to 16 MiB each kind by
    // default; records give chunks of many sizes, so without a tighter bound the lists of a long
    // run's final assembly grow with the record count.
    H5set_free_list_limits(1 << 20, 1 << 16, 1 << 20, 1 << 16, 1 << 20, 1 << 16);
  });
}

bool Id::reset() noexcept {
  if (id_ < 0) return true;
  herr_t status = 0;
  switch (H5Iget_type(id_)) {
    case H5I_FILE: status = H5Fclose(id_); break;
    case H5I_GROUP: status = H5Gclose(id_); break;
    case H5I_DATASET: status = H5Dclose(id_); break;
    case H5I_DATASPACE: status = H5Sclose(id_); break;
    case H5I_DATATYPE: status = H5Tclose(id_); break;
    case H5I_ATTR: status = H5Aclose(id_); break;
    case H5I_GENPROP_LST: status = H5Pclose(id_); break;
    default: status = H5Idec_ref(id_); break;
  }
  id_ = -1;
  return status >= 0;
}

namespace {

herr_t collect_reason(unsigned n, const H5E_error2_t* err, void* data) {
  auto* reasons = static_cast<std::vector<std::string>*>(data);
  if (err->desc) reasons->emplace_back(err->desc);
  return 0;
}

}  // namespace

std::string error_reason() {
  std::vector<std::string> reasons;
  H5Ewalk2(H5E_DEFAULT, H5E_WALK_UPWARD, collect_reason, &reasons);
  H5Eclear2(H5E_DEFAULT);
  // The system's reason (errno text) is the most useful; otherwise the innermost message.
  for (const std::string& r : reasons)
    if (r.find("errno") != std::string::npos) {
      auto pos = r.find("error message = '");
      if (pos == std::string::npos) return r;
      auto end = r.find('\'', pos + 17);
      return r.substr(pos + 17, end == std::string::npos ? std::string::npos : end - pos - 17);
    }
  for (const std::string& r : reasons)
    if (r.find("Fletcher32") != std::string::npos || r.find("filter") != std::string::npos)
      return r + " (damaged data)";
  return reasons.empty() ? std::string("HDF5 error") : reasons.front();
}

hid_t check(hid_t id, const std::string& what) {
  if (id < 0) throw RuntimeFailure(what + ": " + error_reason());
  return id;
}

void check_status(herr_t status, const std::string& what) {
  if (status < 0) throw RuntimeFailure(what + ": " + error_reason());
}

Id bounded_cache_fapl() {
  Id fapl(check(H5Pcreate(H5P_FILE_ACCESS), "file access properties"));
  H5AC_cache_config_t config{};
  config.version = H5AC__CURR_CACHE_CONFIG_VERSION;
  check_status(H5Pget_mdc_config(fapl, &config), "metadata cache configuration");
  config.set_initial_size = true;
  config.initial_size = std::min<std::size_t>(config.initial_size, kMetadataCacheBytes);
  config.min_size = std::min<std::size_t>(config.min_size, config.initial_size);
  config.max_size = kMetadataCacheBytes;
  check_status(H5Pset_mdc_config(fapl, &config), "metadata cache configuration");
  check_status(H5Pset_meta_block_size(fapl, kMetadataBlockBytes), "metadata block size");
  return fapl;
}

Id group_plist() {
  Id plist(check(H5Pcreate(H5P_GROUP_CREATE), "group properties"));
  check_status(H5Pset_obj_track_times(plist, false), "group properties");
  return plist;
}

std::size_t name_heap_bytes(const std::vector<std::string>& names) {
  std::size_t bytes = 8;  // the heap's empty first name
  for (const std::string& n : names) bytes += (n.size() + 1 + 7) / 8 * 8;
  return bytes;
}

Id make_group(hid_t parent, const std::string& name, std::size_t name_heap_hint) {
  Id plist = group_plist();
  if (name_heap_hint > 0) check_status(H5Pset_local_heap_size_hint(plist, name_heap_hint), "group properties");
  return Id(check(H5Gcreate2(parent, name.c_str(), H5P_DEFAULT, plist, H5P_DEFAULT), "create group " + name));
}

Id open_group(hid_t parent, const std::string& name, const std::string& what) {
  return Id(check(H5Gopen2(parent, name.c_str(), H5P_DEFAULT), what));
}

bool exists(hid_t parent, const std::string& path) {
  // Check each prefix: H5Lexists fails on a path whose intermediate group is missing.
  std::size_t pos = path[0] == '/' ? 1 : 0;
  while (true) {
    std::size_t next = path.find('/', pos);
    std::string prefix = path.substr(0, next);
    if (H5Lexists(parent, prefix.c_str(), H5P_DEFAULT) <= 0) {
      H5Eclear2(H5E_DEFAULT);
      return false;
    }
    if (next == std::string::npos) return true;
    pos = next + 1;
  }
}

namespace {

Id vlen_string_type() {
  Id t(check(H5Tcopy(H5T_C_S1), "string type"));
  check_status(H5Tset_size(t, H5T_VARIABLE), "string type");
  check_status(H5Tset_cset(t, H5T_CSET_UTF8), "string type");
  return t;
}

Id fixed_string_type(std::size_t width) {
  Id t(check(H5Tcopy(H5T_C_S1), "string type"));
  check_status(H5Tset_size(t, std::max<std::size_t>(width, 1)), "string type");
  check_status(H5Tset_strpad(t, H5T_STR_NULLPAD), "string type");
  check_status(H5Tset_cset(t, H5T_CSET_UTF8), "string type");
  return t;
}

void write_attr(hid_t obj, const std::string& name, hid_t type, const std::vector<hsize_t>& dims,
                const void* data) {
  Id space(dims.empty() ? H5Screate(H5S_SCALAR)
                        : H5Screate_simple(static_cast<int>(dims.size()), dims.data(), nullptr));
  check(space, "attribute " + name);
  if (H5Aexists(obj, name.c_str()) > 0) H5Adelete(obj, name.c_str());
  Id attr(check(H5Acreate2(obj, name.c_str(), type, space, H5P_DEFAULT, H5P_DEFAULT), "attribute " + name));
  check_status(H5Awrite(attr, type, data), "attribute " + name);
}

Id open_attr(hid_t obj, const std::string& name) {
  return Id(check(H5Aopen(obj, name.c_str(), H5P_DEFAULT), "attribute " + name));
}

std::size_t attr_elements(hid_t attr) {
  Id space(check(H5Aget_space(attr), "attribute space"));
  hssize_t n = H5Sget_simple_extent_npoints(space);
  return n < 0 ? 0 : static_cast<std::size_t>(n);
}

}  // namespace

void set_attr(hid_t obj, const std::string& name, const std::string& value) {
  Id t = vlen_string_type();
  const char* p = value.c_str();
  write_attr(obj, name, t, {}, &p);
}
void set_attr(hid_t obj, const std::string& name, const char* value) { set_attr(obj, name, std::string(value)); }

void set_attr(hid_t obj, const std::string& name, const std::vector<std::string>& values) {
  Id t = vlen_string_type();
  std::vector<const char*> ptrs;
  for (const std::string& v : values) ptrs.push_back(v.c_str());
  static const char* const kNone = "";  // HDF5 wants a buffer even for zero elements
  write_attr(obj, name, t, {values.size()}, ptrs.empty() ? &kNone : ptrs.data());
}

void set_attr_i32(hid_t obj, const std::string& name, std::int32_t v) { write_attr(obj, name, H5T_STD_I32LE, {}, &v); }
void set_attr_i64(hid_t obj, const std::string& name, std::int64_t v) { write_attr(obj, name, H5T_STD_I64LE, {}, &v); }
void set_attr_u64(hid_t obj, const std::string& name, std::uint64_t v) { write_attr(obj, name, H5T_STD_U64LE, {}, &v); }
void set_attr_f64(hid_t obj, const std::string& name, double v) { write_attr(obj, name, H5T_IEEE_F64LE, {}, &v); }
void set_attr_i32s(hid_t obj, const std::string& name, const std::vector<std::int32_t>& values) {
  static const std::int32_t kNone = 0;  // HDF5 wants a buffer even for zero elements
  write_attr(obj, name, H5T_STD_I32LE, {values.size()}, values.empty() ? &kNone : values.data());
}

bool has_attr(hid_t obj, const std::string& name) { return H5Aexists(obj, name.c_str()) > 0; }

std::vector<std::string> attr_strings(hid_t obj, const std::string& name) {
  Id attr = open_attr(obj, name);
  Id ftype(check(H5Aget_type(attr), "attribute " + name));
  if (H5Tget_class(ftype) != H5T_STRING) throw RuntimeFailure("attribute " + name + ": not a string");
  std::size_t n = attr_elements(attr);
  std::vector<std::string> out;
  if (H5Tis_variable_str(ftype) > 0) {
    Id t = vlen_string_type();
    std::vector<char*> ptrs(n, nullptr);
    check_status(H5Aread(attr, t, ptrs.data()), "attribute " + name);
    for (char* p : ptrs) out.emplace_back(p ? p : "");
    Id space(H5Aget_space(attr));
    H5Dvlen_reclaim(t, space, H5P_DEFAULT, ptrs.data());
  } else {
    std::size_t width = H5Tget_size(ftype);
    Id t = fixed_string_type(width);
    std::vector<char> buf(n * width);
    check_status(H5Aread(attr, t, buf.data()), "attribute " + name);
    for (std::size_t i = 0; i < n; ++i) {
      const char* p = buf.data() + i * width;
      out.emplace_back(p, strnlen(p, width));
    }
  }
  return out;
}

std::string attr_string(hid_t obj, const std::string& name) {
  auto v = attr_strings(obj, name);
  return v.empty() ? std::string{} : v.front();
}

std::vector<std::int64_t> attr_ints(hid_t obj, const std::string& name) {
  Id attr = open_attr(obj, name);
  std::vector<std::int64_t> out(attr_elements(attr));
  check_status(H5Aread(attr, H5T_NATIVE_INT64, out.data()), "attribute " + name);
  return out;
}

std::int64_t attr_int(hid_t obj, const std::string& name) {
  auto v = attr_ints(obj, name);
  if (v.size() != 1) throw RuntimeFailure("attribute " + name + ": expected a scalar");
  return v.front();
}

std::uint64_t attr_u64(hid_t obj, const std::string& name) {
  Id attr = open_attr(obj, name);
  std::uint64_t v = 0;
  check_status(H5Aread(attr, H5T_NATIVE_UINT64, &v), "attribute " + name);
  return v;
}

double attr_f64(hid_t obj, const std::string& name) {
  Id attr = open_attr(obj, name);
  double v = 0;
  check_status(H5Aread(attr, H5T_NATIVE_DOUBLE, &v), "attribute " + name);
  return v;
}

namespace {
herr_t collect_attr_name(hid_t, const char* name, const H5A_info_t*, void* data) {
  static_cast<std::vector<std::string>*>(data)->emplace_back(name);
  return 0;
}
}  // namespace

std::vector<std::string> attr_names(hid_t obj) {
  std::vector<std::string> names;
  hsize_t idx = 0;
  H5Aiterate2(obj, H5_INDEX_NAME, H5_ITER_INC, &idx, collect_attr_name, &names);
  return names;
}

Id write_array(hid_t parent, const std::string& name, const void* data, hid_t mem_type, hid_t file_type,
               const ArraySpec& spec) {
  std::vector<hsize_t> dims = spec.one_d ? std::vector<hsize_t>{spec.cols}
                                         : std::vector<hsize_t>{spec.rows, spec.cols};
  Id space(check(H5Screate_simple(static_cast<int>(dims.size()), dims.data(), nullptr), name));
  Id dcpl(check(H5Pcreate(H5P_DATASET_CREATE), name));
  check_status(H5Pset_obj_track_times(dcpl, false), name);
  if (spec.rows > 0 && spec.cols > 0) {
    std::vector<hsize_t> chunk = spec.one_d ? std::vector<hsize_t>{std::min(spec.chunk_cols, spec.cols)}
                                            : std::vector<hsize_t>{1, std::min(spec.chunk_cols, spec.cols)};
    check_status(H5Pset_chunk(dcpl, static_cast<int>(chunk.size()), chunk.data()), name);
    if (spec.shuffle && spec.gzip_level > 0) check_status(H5Pset_shuffle(dcpl), name);
    if (spec.gzip_level > 0) check_status(H5Pset_deflate(dcpl, static_cast<unsigned>(spec.gzip_level)), name);
    check_status(H5Pset_fletcher32(dcpl), name);
  }
  Id ds(check(H5Dcreate2(parent, name.c_str(), file_type, space, H5P_DEFAULT, dcpl, H5P_DEFAULT), name));
  if (spec.rows > 0 && spec.cols > 0)
    check_status(H5Dwrite(ds, mem_type, H5S_ALL, H5S_ALL, H5P_DEFAULT, data), name);
  return ds;
}

hid_t file_type_of(StoredType t) {
  switch (t) {
    case StoredType::u8: return H5T_STD_U8LE;
    case StoredType::i16: return H5T_STD_I16LE;
    case StoredType::i32: return H5T_STD_I32LE;
    case StoredType::f32: return H5T_IEEE_F32LE;
    case StoredType::packed: break;
  }
  return -1;
}

Id create_encoded(hid_t parent, const std::string& name, const EncodedArray& a, hid_t file_type) {
  std::vector<hsize_t> dims = a.one_d ? std::vector<hsize_t>{a.cols} : std::vector<hsize_t>{a.rows, a.cols};
  Id space(check(H5Screate_simple(static_cast<int>(dims.size()), dims.data(), nullptr), name));
  Id dcpl(check(H5Pcreate(H5P_DATASET_CREATE), name));
  check_status(H5Pset_obj_track_times(dcpl, false), name);
  if (a.chunk_cols > 0) {
    std::vector<hsize_t> chunk = a.one_d ? std::vector<hsize_t>{a.chunk_cols} : std::vector<hsize_t>{1, a.chunk_cols};
    check_status(H5Pset_chunk(dcpl, static_cast<int>(chunk.size()), chunk.data()), name);
    if (a.filters.shuffle) check_status(H5Pset_shuffle(dcpl), name);
    if (a.filters.deflate_level > 0)
      check_status(H5Pset_deflate(dcpl, static_cast<unsigned>(a.filters.deflate_level)), name);
    if (a.filters.fletcher32) check_status(H5Pset_fletcher32(dcpl), name);
  }
  return Id(check(H5Dcreate2(parent, name.c_str(), file_type >= 0 ? file_type : file_type_of(a.type), space, H5P_DEFAULT, dcpl, H5P_DEFAULT), name));
}

std::uint64_t write_chunk(hid_t dataset, const EncodedArray& a, std::size_t k, const std::vector<unsigned char>& chunk,
                          const std::string& name, bool locate) {
  const std::size_t per_row = a.chunks_per_row();
  const hsize_t two_d[2] = {k / per_row, (k % per_row) * a.chunk_cols};
  const hsize_t* offset = a.one_d ? &two_d[1] : two_d;
  check_status(H5Dwrite_chunk(dataset, H5P_DEFAULT, 0, offset, chunk.size(), chunk.data()), name);
  if (!locate) return 0;
  unsigned filter_mask = 0;
  haddr_t address = HADDR_UNDEF;
  hsize_t stored = 0;
  check_status(H5Dget_chunk_info_by_coord(dataset, offset, &filter_mask, &address, &stored), name);
  if (address == HADDR_UNDEF || stored != chunk.size())
    throw RuntimeFailure(name + ": chunk " + std::to_string(k) + " not found after writing it");
  return address;
}

Id write_encoded(hid_t parent, const std::string& name, const EncodedArray& a, hid_t file_type,
                 std::vector<std::uint64_t>* chunk_offsets) {
  Id ds = create_encoded(parent, name, a, file_type);
  for (std::size_t k = 0; k < a.chunks.size(); ++k) {
    const std::uint64_t at = write_chunk(ds, a, k, a.chunks[k], name, chunk_offsets != nullptr);
    if (chunk_offsets) chunk_offsets->push_back(at);
  }
  return ds;
}

std::vector<std::uint64_t> shape(hid_t dataset) {
  Id space(check(H5Dget_space(dataset), "dataspace"));
  int rank = H5Sget_simple_extent_ndims(space);
  std::vector<hsize_t> dims(static_cast<std::size_t>(std::max(rank, 0)));
  if (rank > 0) H5Sget_simple_extent_dims(space, dims.data(), nullptr);
  return {dims.begin(), dims.end()};
}

void read_all(hid_t dataset, hid_t mem_type, void* out, const std::string& what, hid_t dxpl) {
  std::uint64_t n = 1;
  for (auto d : shape(dataset)) n *= d;
  if (n == 0) return;
  check_status(H5Dread(dataset, mem_type, H5S_ALL, H5S_ALL, dxpl, out), what);
}

namespace {

hid_t file_type_of(ColumnKind k) {
  switch (k) {
    case ColumnKind::i8: return H5T_STD_I8LE;
    case ColumnKind::u8: return H5T_STD_U8LE;
    case ColumnKind::i32: return H5T_STD_I32LE;
    case ColumnKind::i64: return H5T_STD_I64LE;
    case ColumnKind::u64: return H5T_STD_U64LE;
    case ColumnKind::f64: return H5T_IEEE_F64LE;
    case ColumnKind::str: break;
  }
  return -1;
}

}  // namespace

// Packed little-endian compound; the same layout serves as file and memory type on x86-64/arm64.
Id compound_type(const std::vector<TableMember>& members, std::size_t row_bytes) {
  Id type(check(H5Tcreate(H5T_COMPOUND, std::max<std::size_t>(row_bytes, 1)), "compound type"));
  for (const TableMember& m : members) {
    Id member = m.kind == ColumnKind::str ? fixed_string_type(m.bytes) : Id(check(H5Tcopy(file_type_of(m.kind)), "column type"));
    check_status(H5Tinsert(type, m.name.c_str(), m.offset, member), "compound type");
  }
  return type;
}

Id write_table(hid_t parent, const std::string& name, const Table& table, const ChunkFilters& filters) {
  const EncodedTable e = encode_table(table, filters);
  Id type = compound_type(e.members, e.rows.element_bytes);
  Id ds = write_encoded(parent, name, e.rows, type);
  set_attr(ds, "units", e.units);
  return ds;
}

Table read_table(hid_t dataset, const std::string& what) {
  Id ftype(check(H5Dget_type(dataset), what));
  if (H5Tget_class(ftype) != H5T_COMPOUND) throw RuntimeFailure(what + ": not a compound table");
  Table table;
  const std::size_t n = static_cast<std::size_t>(shape(dataset).at(0));
  // Conversion buffers sized to the table: HDF5's default (1 MiB, the background buffer zeroed
  // on every read) made reading a small table cost about 1 MiB of memset per column.
  Id dxpl(check(H5Pcreate(H5P_DATASET_XFER), what));
  const std::size_t row_bytes = std::max<std::size_t>(H5Tget_size(ftype), 8);
  const std::size_t buffer_bytes = std::clamp<std::size_t>(std::max<std::size_t>(n, 1) * row_bytes, row_bytes, 1u << 20);
  check_status(H5Pset_buffer(dxpl, buffer_bytes, nullptr, nullptr), what);
  // A damaged shape could ask for terabytes; the rows can be at most as large as their stored
  // bytes allow (deflate expands at most about 1032:1; 1100 leaves room for shuffle and RLE).
  const double stored_bytes = static_cast<double>(H5Dget_storage_size(dataset));
  if (static_cast<double>(n) * static_cast<double>(row_bytes) > std::max(stored_bytes * 1100.0, double(1u << 20)))
    throw RuntimeFailure(fmt::format("{}: damaged table ({} rows of {} bytes from {} stored bytes)", what, n,
                                     row_bytes, stored_bytes));
  int members = H5Tget_nmembers(ftype);
  // A member reaching past the row (a damaged file) would make HDF5's conversion read past the
  // right-sized buffers above.
  for (int i = 0; i < members; ++i) {
    Id mtype(check(H5Tget_member_type(ftype, static_cast<unsigned>(i)), what));
    if (H5Tget_member_offset(ftype, static_cast<unsigned>(i)) + H5Tget_size(mtype) > H5Tget_size(ftype))
      throw RuntimeFailure(what + ": damaged table (column " + std::to_string(i) + " reaches past its row)");
  }
  for (int i = 0; i < members; ++i) {
    char* mname = H5Tget_member_name(ftype, static_cast<unsigned>(i));
    std::string name = mname ? mname : "";
    H5free_memory(mname);
    Id mtype(check(H5Tget_member_type(ftype, static_cast<unsigned>(i)), what));
    H5T_class_t cls = H5Tget_class(mtype);
    ColumnKind kind = ColumnKind::f64;
    if (cls == H5T_STRING) kind = ColumnKind::str;
    else if (cls == H5T_INTEGER) kind = H5Tget_sign(mtype) == H5T_SGN_NONE ? ColumnKind::u64 : ColumnKind::i64;
    else if (cls != H5T_FLOAT) continue;  // unknown member classes are skipped
    Column& col = table.add(name, kind);
    // Read one member at a time into native storage through a single-member compound.
    std::size_t width = kind == ColumnKind::str ? H5Tget_size(mtype) : 8;
    Id native = kind == ColumnKind::str ? fixed_string_type(width)
                : Id(check(H5Tcopy(kind == ColumnKind::f64   ? H5T_NATIVE_DOUBLE
                                   : kind == ColumnKind::u64 ? H5T_NATIVE_UINT64
                                                             : H5T_NATIVE_INT64),
                           what));
    Id one(check(H5Tcreate(H5T_COMPOUND, width), what));
    check_status(H5Tinsert(one, name.c_str(), 0, native), what);
    std::vector<unsigned char> buf(n * width, 0);
    read_all(dataset, one, buf.data(), what, dxpl);
    for (std::size_t r = 0; r < n; ++r) {
      const unsigned char* src = buf.data() + r * width;
      if (kind == ColumnKind::str) {
        col.strings.emplace_back(reinterpret_cast<const char*>(src), strnlen(reinterpret_cast<const char*>(src), width));
      } else if (kind == ColumnKind::f64) {
        double v;
        std::memcpy(&v, src, 8);
        col.reals.push_back(v);
      } else {
        std::int64_t v;
        std::memcpy(&v, src, 8);
        col.ints.push_back(v);
      }
    }
  }
  if (has_attr(dataset, "units")) {
    auto units = attr_strings(dataset, "units");
    for (std::size_t i = 0; i < units.size() && i < table.columns.size(); ++i) table.columns[i].unit = units[i];
  }
  return table;
}

}  // namespace stethogen::bundle::h5
