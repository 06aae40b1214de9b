#include "bundle/writer.hpp"

#include <fcntl.h>
#include <unistd.h>

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <ctime>
#include <optional>
#include <vector>

#include <fmt/format.h>

#include "bundle/hdf5_io.hpp"
#include "bundle/index_spill.hpp"
#include "bundle/reader_impl.hpp"
#include "bundle/schema.hpp"
#include "bundle/staged_record.hpp"
#include "bundle/table_codec.hpp"
#include "core/error.hpp"

namespace stethogen::bundle {

namespace fs = std::filesystem;

namespace {

// ISO 8601 UTC; SOURCE_DATE_EPOCH (seconds) pins it for reproducible files.
std::string now_utc() {
  std::time_t t = std::time(nullptr);
  if (const char* epoch = std::getenv("SOURCE_DATE_EPOCH"); epoch && *epoch) t = std::strtoll(epoch, nullptr, 10);
  std::tm tm{};
  gmtime_r(&t, &tm);
  char buf[32];
  std::strftime(buf, sizeof buf, "%Y-%m-%dT%H:%M:%SZ", &tm);
  return buf;
}

void fsync_file(const fs::path& path) {
  int fd = ::open(path.c_str(), O_RDONLY);
  if (fd < 0) return;
  int rc = ::fsync(fd);
  ::close(fd);
  if (rc != 0) throw RuntimeFailure(fmt::format("{}: cannot flush to disk", path.string()));
}

}  // namespace

struct BundleWriter::Impl {
  fs::path target, temp;
  BundleAttributes attributes;
  WriterOptions options;
  h5::Id file, records;
  // The /index rows, on disk until finish() (a run of many records keeps flat memory).
  std::optional<IndexSpill> index;
  std::vector<SkippedRecord> skipped;
  bool open = false;
  // Durable files: bytes handed to the kernel for writing to disk so far (start_writeback).
  std::uint64_t writeback_bytes = 0;

  std::string where(const std::string& object) const { return fmt::format("{}: {}", temp.string(), object); }

  // Asked of the file rather than kept in a set, so memory does not grow with the record count.
  bool has_record(const std::string& id) const { return H5Lexists(records, id.c_str(), H5P_DEFAULT) > 0; }

  ChunkFilters table_filters() const { return bundle::table_filters(attributes.compression); }

  static void write_attributes(hid_t obj, const std::vector<StagedAttribute>& attributes) {
    using Kind = StagedAttribute::Kind;
    for (const StagedAttribute& a : attributes) switch (a.kind) {
        case Kind::str: h5::set_attr(obj, a.name, a.strings.at(0)); break;
        case Kind::strs: h5::set_attr(obj, a.name, a.strings); break;
        case Kind::i32: h5::set_attr_i32(obj, a.name, static_cast<std::int32_t>(a.ints.at(0))); break;
        case Kind::i64: h5::set_attr_i64(obj, a.name, a.ints.at(0)); break;
        case Kind::u64: h5::set_attr_u64(obj, a.name, static_cast<std::uint64_t>(a.ints.at(0))); break;
        case Kind::f64: h5::set_attr_f64(obj, a.name, a.real); break;
        case Kind::i32s: h5::set_attr_i32s(obj, a.name, {a.ints.begin(), a.ints.end()}); break;
      }
  }

  // The record's group, then its objects in order; a subgroup stays open for the datasets in it.
  // The names of the members of the group at `path` ("" = the record's group).
  static std::vector<std::string> member_names(const StagedRecord& r, const std::string& path) {
    std::vector<std::string> names;
    for (const StagedObject& o : r.objects) {
      const std::size_t slash = o.path.rfind('/');
      const std::string parent = slash == std::string::npos ? std::string() : o.path.substr(0, slash);
      if (parent == path) names.push_back(slash == std::string::npos ? o.path : o.path.substr(slash + 1));
    }
    return names;
  }

  void write(const StagedRecord& r, std::vector<std::uint64_t>* chunk_offsets) {
    h5::Id g = h5::make_group(records, r.row.record_id, h5::name_heap_bytes(member_names(r, "")));
    write_attributes(g, r.attributes);
    std::string open_path;
    h5::Id open_group;
    for (const StagedObject& o : r.objects) {
      const std::size_t slash = o.path.rfind('/');
      const std::string parent_path = slash == std::string::npos ? std::string() : o.path.substr(0, slash);
      const std::string leaf = slash == std::string::npos ? o.path : o.path.substr(slash + 1);
      if (!parent_path.empty() && parent_path != open_path) {
        open_group = h5::open_group(g, parent_path, where(parent_path));
        open_path = parent_path;
      }
      const hid_t parent = parent_path.empty() ? hid_t(g) : hid_t(open_group);
      if (o.group) {
        h5::Id sub = h5::make_group(parent, leaf, h5::name_heap_bytes(member_names(r, o.path)));
        write_attributes(sub, o.attributes);
        continue;
      }
      h5::Id type = o.members.empty() ? h5::Id() : h5::compound_type(o.members, o.data.element_bytes);
      h5::Id ds = h5::write_encoded(parent, leaf, o.data, type.valid() ? hid_t(type) : hid_t(-1), chunk_offsets);
      write_attributes(ds, o.attributes);
    }
  }

  // /index as index_table(all rows) would write it, with the string widths of the whole table,
  // one chunk of kTableChunkRows rows at a time packed from the spilled rows, which are read
  // kIndexReadRows at a time: the same bytes for a transient of about two chunks (~1 MB).
  static constexpr std::size_t kIndexReadRows = 256;  // divides kTableChunkRows: no block straddles chunks
  void write_index() {
    const ChunkFilters filters = table_filters();
    if (index->size() == 0) {
      h5::write_table(file, "index", index_table({}), filters);
      return;
    }
    const Table widest = index_table({index->widest()});
    const std::vector<TableMember> members = table_members(widest);
    const std::size_t row_size = row_bytes(members), chunk_rows = std::min(kTableChunkRows, index->size());
    h5::Id type = h5::compound_type(members, row_size);
    h5::Id ds;
    EncodedArray layout;
    std::size_t k = 0;
    std::vector<unsigned char> packed;
    packed.reserve(chunk_rows * row_size);
    const auto store_chunk = [&] {
      packed.resize(chunk_rows * row_size, 0);  // the last chunk zero-filled, as encode_elements does
      EncodedArray chunk = encode_elements(packed.data(), 1, chunk_rows, true, StoredType::packed, row_size,
                                           chunk_rows, filters);
      if (!ds.valid()) {
        layout = chunk;
        layout.chunks.clear();
        layout.cols = index->size();
        ds = h5::create_encoded(file, "index", layout, type);
      }
      h5::write_chunk(ds, layout, k++, chunk.chunks.at(0), "index");
      packed.clear();
    };
    index->read_blocks(kIndexReadRows, [&](const std::vector<IndexRow>& rows) {
      const std::vector<unsigned char> block = pack_rows(index_table(rows), members);
      packed.insert(packed.end(), block.begin(), block.end());
      if (packed.size() == chunk_rows * row_size) store_chunk();
    });
    if (!packed.empty()) store_chunk();
    std::vector<std::string> units;
    for (const Column& c : widest.columns) units.push_back(c.unit);
    h5::set_attr(ds, "units", units);
  }

  // A durable file is flushed to disk by finish(); its data is sent on its way as it grows, so
  // that flush waits only for the last few MiB instead of the whole file (about 85 ms for a
  // 170 MB bundle, serial at the end of a run). sync_file_range only starts the writeback (the
  // same kernel work fsync would do later); it is no durability promise in itself.
  static constexpr std::uint64_t kWritebackBytes = 8u << 20;
  void start_writeback() {
    hsize_t size = 0;
    if (!options.durable || H5Fget_filesize(file, &size) < 0 || size < writeback_bytes + kWritebackBytes) return;
    void* handle = nullptr;
    if (H5Fget_vfd_handle(file, H5P_DEFAULT, &handle) < 0 || !handle) return;
    const int fd = *static_cast<int*>(handle);  // the default (sec2) driver's handle: its descriptor
    ::sync_file_range(fd, static_cast<off_t>(writeback_bytes), static_cast<off_t>(size - writeback_bytes),
                      SYNC_FILE_RANGE_WRITE);  // best effort: finish() flushes and checks
    writeback_bytes = size;
  }

  void close_and_remove() noexcept {
    records.reset();
    file.reset();
    std::error_code ec;
    if (!options.keep_temp) fs::remove(temp, ec);
    open = false;
  }
};

BundleWriter::BundleWriter(const fs::path& target, const BundleAttributes& attributes, const WriterOptions& options)
    : impl_(std::make_unique<Impl>()) {
  std::lock_guard guard(h5::lock());
  h5::init();
  Impl& m = *impl_;
  m.target = target;
  m.temp = options.temp_path.empty() ? fs::path(target.string() + ".partial") : options.temp_path;
  m.attributes = attributes;
  m.options = options;
  if (fs::exists(target) && !options.overwrite)
    throw InputError(fmt::format("{}: output exists; pass --force to replace it", target.string()));
  if (m.attributes.created_utc.empty()) m.attributes.created_utc = now_utc();

  h5::Id fcpl(h5::check(H5Pcreate(H5P_FILE_CREATE), "file properties"));
  h5::check_status(H5Pset_obj_track_times(fcpl, false), "file properties");
  // Chunk-index B-tree nodes of kChunkIndexK entries instead of HDF5's default 32: one node per
  // dataset still holds a 30 s record's chunks, and a node takes ~0.7 KB instead of ~2.6 KB of
  // file and cache for each of a record's 17 chunked datasets.
  h5::check_status(H5Pset_istore_k(fcpl, kChunkIndexK), "file properties");
  h5::Id fapl = h5::bounded_cache_fapl();
  m.file = h5::Id(H5Fcreate(m.temp.c_str(), H5F_ACC_TRUNC, fcpl, fapl));
  if (!m.file.valid())
    throw RuntimeFailure(fmt::format("{}: cannot create: {}", m.temp.string(), h5::error_reason()));
  m.open = true;
  try {
    m.index.emplace(m.temp.parent_path());
    const BundleAttributes& a = m.attributes;
    hid_t root = m.file;
    h5::set_attr(root, "format", kBundleFormatName);
    h5::set_attr_i32s(root, "format_version", {kBundleFormatMajor, kBundleFormatMinor});
    h5::set_attr(root, "generator_version", a.generator_version);
    h5::set_attr(root, "recipe_toml", a.recipe_toml);
    h5::set_attr(root, "recipe_sha256", a.recipe_sha256);
    h5::set_attr_u64(root, "seed", a.seed);
    h5::set_attr_u64(root, "record_count", a.record_count);
    h5::set_attr(root, "sample_format", std::string(name(a.sample_format)));
    h5::set_attr(root, "content", a.content);
    h5::set_attr(root, "compression", std::string(name(a.compression)));
    if (a.shard_count > 0) h5::set_attr_i32s(root, "shard", {a.shard_index, a.shard_count});
    for (const auto& [key, value] : a.extra) h5::set_attr(root, key, value);
    h5::set_attr(root, "created_utc", a.created_utc);
    m.records = h5::make_group(root, "records");
  } catch (const RuntimeFailure& e) {
    m.close_and_remove();
    throw RuntimeFailure(fmt::format("{}: {}", m.temp.string(), e.what()));
  }
}

BundleWriter::~BundleWriter() { abandon(); }

void BundleWriter::write_record(const Record& record, const RecordParts& parts, const std::string& override_id) {
  write_record(record, encode_record(record, parts, impl_->attributes.sample_format, impl_->attributes.compression),
               parts, override_id);
}

void BundleWriter::write_record(const Record& record, const EncodedRecord& encoded, const RecordParts& parts,
                                const std::string& override_id) {
  write_staged(stage_record(record, encoded, parts, staging_settings(impl_->attributes), override_id));
}

void BundleWriter::write_staged(const StagedRecord& record, std::vector<std::uint64_t>* chunk_offsets) {
  std::lock_guard guard(h5::lock());
  Impl& m = *impl_;
  const std::string& id = record.row.record_id;
  if (!m.open) throw std::logic_error("BundleWriter: write after finish/abandon");
  if (id.empty() || id.find('/') != std::string::npos || id == "." )
    throw InputError(fmt::format("record id '{}': must be non-empty and contain no '/'", id));
  if (m.has_record(id)) throw InputError(fmt::format("{}: duplicate record id '{}'", m.target.string(), id));
  try {
    m.write(record, chunk_offsets);
  } catch (const RuntimeFailure& e) {
    throw RuntimeFailure(fmt::format("{}: record {}: {}", m.temp.string(), id, e.what()));
  }
  m.index->append(record.row);
  m.start_writeback();
}

void BundleWriter::copy_record(const BundleReader& source, const std::string& record_id) {
  std::lock_guard guard(h5::lock());
  Impl& m = *impl_;
  if (!m.open) throw std::logic_error("BundleWriter: write after finish/abandon");
  const IndexRow* row = source.impl_->row(record_id);
  if (!row) throw InputError(fmt::format("{}: no record '{}'", source.path().string(), record_id));
  if (m.has_record(record_id))
    throw InputError(fmt::format("{}: duplicate record id '{}'", source.path().string(), record_id));
  const std::string from = "/records/" + record_id;
  if (H5Ocopy(source.impl_->file, from.c_str(), m.records, record_id.c_str(), H5P_DEFAULT, H5P_DEFAULT) < 0)
    throw RuntimeFailure(fmt::format("{}: copying {} from {}: {}", m.temp.string(), from,
                                     source.path().string(), h5::error_reason()));
  m.index->append(*row);
}

void BundleWriter::add_skipped(const SkippedRecord& skipped) { impl_->skipped.push_back(skipped); }

void BundleWriter::write_string_table(const std::string& path, const StringTable& table) {
  std::lock_guard guard(h5::lock());
  Impl& m = *impl_;
  if (path.empty() || path[0] != '/' || path.rfind("/records", 0) == 0 || path == "/index" || path == "/skipped")
    throw std::invalid_argument("write_string_table: path must be absolute and outside /records, /index, /skipped");
  // Create the parent groups.
  std::size_t last = path.rfind('/');
  hid_t parent = m.file;
  h5::Id group;
  std::size_t pos = 1;
  while (pos < last) {
    std::size_t next = path.find('/', pos);
    std::string prefix = path.substr(0, next);
    group = h5::exists(m.file, prefix) ? h5::open_group(m.file, prefix, m.where(prefix)) : h5::make_group(m.file, prefix);
    pos = next + 1;
  }
  if (group.valid()) parent = group;
  try {
    h5::write_table(parent, path.substr(last + 1), string_table(table), m.table_filters());
  } catch (const RuntimeFailure& e) {
    throw RuntimeFailure(m.where(path) + ": " + e.what());
  }
}

void BundleWriter::finish() {
  std::lock_guard guard(h5::lock());
  Impl& m = *impl_;
  if (!m.open) throw std::logic_error("BundleWriter: finish after finish/abandon");
  try {
    m.write_index();
    h5::write_table(m.file, "skipped", skipped_table(m.skipped), m.table_filters());
    m.records.reset();
    h5::check_status(H5Fflush(m.file, H5F_SCOPE_GLOBAL), "flush");
    if (!m.file.reset()) throw RuntimeFailure("close: " + h5::error_reason());
    m.open = false;
    if (m.options.durable) fsync_file(m.temp);
  } catch (const RuntimeFailure& e) {
    m.close_and_remove();
    throw RuntimeFailure(fmt::format("{}: {} (nothing written to {})", m.temp.string(), e.what(), m.target.string()));
  }
  if (fs::exists(m.target) && !m.options.overwrite) {
    m.close_and_remove();
    throw InputError(fmt::format("{}: output appeared while writing; pass --force to replace it", m.target.string()));
  }
  std::error_code ec;
  fs::rename(m.temp, m.target, ec);
  if (ec) {
    m.close_and_remove();
    throw RuntimeFailure(fmt::format("{}: cannot rename to {}: {}", m.temp.string(), m.target.string(), ec.message()));
  }
}

void BundleWriter::abandon() noexcept {
  if (!impl_ || !impl_->open) return;
  std::lock_guard guard(h5::lock());
  impl_->close_and_remove();
}

std::size_t BundleWriter::records_written() const { return impl_->index ? impl_->index->size() : 0; }
const fs::path& BundleWriter::target() const { return impl_->target; }
const fs::path& BundleWriter::temp_path() const { return impl_->temp; }

}  // namespace stethogen::bundle
