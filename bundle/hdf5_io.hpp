// Adapter-internal HDF5 helpers (C API): owning handles, errors that carry HDF5's own reason,
// attributes, chunked and filtered arrays, packed compound tables. Included only by bundle/*.cpp
// of the adapter; nothing outside the adapter sees an HDF5 type.
#pragma once

#include <hdf5.h>

#include <cstdint>
#include <mutex>
#include <string>
#include <vector>

#include "bundle/chunk_codec.hpp"
#include "bundle/table.hpp"
#include "bundle/table_codec.hpp"

namespace stethogen::bundle::h5 {

// All HDF5 calls of the adapter run under this lock (one reader or writer at a time).
std::recursive_mutex& lock();
// Once per process: silence HDF5's automatic error printing (we report errors ourselves).
void init();

// An owning hid_t, closed with the matching H5*close.
class Id {
 public:
  Id() = default;
  explicit Id(hid_t id) : id_(id) {}
  Id(Id&& o) noexcept : id_(o.id_) { o.id_ = -1; }
  Id& operator=(Id&& o) noexcept {
    if (this != &o) {
      reset();
      id_ = o.id_;
      o.id_ = -1;
    }
    return *this;
  }
  Id(const Id&) = delete;
  Id& operator=(const Id&) = delete;
  ~Id() { reset(); }
  hid_t get() const { return id_; }
  operator hid_t() const { return id_; }
  bool valid() const { return id_ >= 0; }
  // Closes now; returns false if HDF5 reported an error (e.g. a failed flush on file close).
  bool reset() noexcept;

 private:
  hid_t id_ = -1;
};

// The innermost reason on HDF5's error stack (e.g. "No space left on device"), then clears it.
std::string error_reason();
// Throws RuntimeFailure "what: reason" when id < 0 / status < 0.
hid_t check(hid_t id, const std::string& what);
void check_status(herr_t status, const std::string& what);

// File access properties whose metadata cache stays at most kMetadataCacheBytes (and whose
// metadata blocks are kMetadataBlockBytes). With HDF5's
// default (adaptive, up to 32 MiB) assembling a run's records took about 22 MiB of cache, more
// the more records; the writer only appends, so a small cache costs no re-reads (measured: the
// same CPU time, peak heap of a 300-record merge 28 -> 6 MiB).
inline constexpr std::size_t kMetadataCacheBytes = 256u << 10;
// Metadata is allocated from blocks of this size (HDF5's default 2 KiB). Each record's chunks
// are allocated at the end of the file, so a small block is soon left behind with a few bytes
// unused, which HDF5 then tracks as free space in memory until the file is closed: 6.6 such
// pieces per record with 2 KiB, 0.3 with 64 KiB (measured on 2000 records; peak memory growth
// 4.2 -> 1.4 KB per record, file size the same to 0.01 %).
inline constexpr std::size_t kMetadataBlockBytes = 64u << 10;
Id bounded_cache_fapl();

// Creation property lists with object timestamps off, so files are reproducible.
Id group_plist();
// name_heap_hint: bytes for the names of the group's members (name_heap_bytes), so its name
// heap is made once at its final size instead of growing by reallocation: each reallocation
// leaves a freed block that HDF5 tracks in memory for as long as the file is open.
Id make_group(hid_t parent, const std::string& name, std::size_t name_heap_hint = 0);
std::size_t name_heap_bytes(const std::vector<std::string>& names);
Id open_group(hid_t parent, const std::string& name, const std::string& what);
bool exists(hid_t parent, const std::string& path);

// Attributes (scalars and 1-D arrays). Strings are variable-length UTF-8.
void set_attr(hid_t obj, const std::string& name, const std::string& value);
void set_attr(hid_t obj, const std::string& name, const char* value);
void set_attr(hid_t obj, const std::string& name, const std::vector<std::string>& values);
void set_attr_i32(hid_t obj, const std::string& name, std::int32_t value);
void set_attr_i64(hid_t obj, const std::string& name, std::int64_t value);
void set_attr_u64(hid_t obj, const std::string& name, std::uint64_t value);
void set_attr_f64(hid_t obj, const std::string& name, double value);
void set_attr_i32s(hid_t obj, const std::string& name, const std::vector<std::int32_t>& values);

bool has_attr(hid_t obj, const std::string& name);
std::string attr_string(hid_t obj, const std::string& name);
std::vector<std::string> attr_strings(hid_t obj, const std::string& name);
std::int64_t attr_int(hid_t obj, const std::string& name);
std::uint64_t attr_u64(hid_t obj, const std::string& name);
double attr_f64(hid_t obj, const std::string& name);
std::vector<std::int64_t> attr_ints(hid_t obj, const std::string& name);
std::vector<std::string> attr_names(hid_t obj);

// A [rows, cols] array (rows = 1 for 1-D when one_d), chunked [1, min(chunk_cols, cols)] with
// shuffle (optional, only with gzip), gzip (level 0 = none) and Fletcher32. file_type is the stored type, mem_type the buffer's.
struct ArraySpec {
  std::size_t rows = 0, cols = 0;
  bool one_d = false;
  std::size_t chunk_cols = 16384;
  int gzip_level = 4;
  bool shuffle = true;
};
Id write_array(hid_t parent, const std::string& name, const void* data, hid_t mem_type, hid_t file_type,
               const ArraySpec& spec);
// Creates a dataset with the filters of `array` and stores its already-filtered chunks as they are
// (H5Dwrite_chunk, all filters applied): the cheap half of writing, on the HDF5 thread.
// The little-endian file type each stored type is written as.
hid_t file_type_of(StoredType t);
// file_type: the stored type; -1 = file_type_of(array.type) (a packed table needs compound_type).
// chunk_offsets (if given) gets each chunk's byte offset in the file, in chunk order.
Id write_encoded(hid_t parent, const std::string& name, const EncodedArray& array, hid_t file_type = -1,
                 std::vector<std::uint64_t>* chunk_offsets = nullptr);
// The two halves of write_encoded, for a dataset whose chunks come one at a time: the dataset of
// `array`'s shape and filters (chunked unless array.chunk_cols is 0; its chunks are ignored), and
// chunk k of it (in the order of EncodedArray::chunks).
Id create_encoded(hid_t parent, const std::string& name, const EncodedArray& array, hid_t file_type = -1);
// Returns the chunk's byte offset in the file when `locate` (HDF5 writes a chunk straight to the file).
std::uint64_t write_chunk(hid_t dataset, const EncodedArray& array, std::size_t k,
                          const std::vector<unsigned char>& chunk, const std::string& name, bool locate = false);
std::vector<std::uint64_t> shape(hid_t dataset);
// Reads a whole dataset converted to mem_type; out must hold the element count.
void read_all(hid_t dataset, hid_t mem_type, void* out, const std::string& what, hid_t dxpl = H5P_DEFAULT);

// The compound file type of a packed table (bundle/table_codec.hpp).
Id compound_type(const std::vector<TableMember>& members, std::size_t row_bytes);
// Packed compound tables, one member per column (encode_table), chunked with `filters` unless empty.
Id write_table(hid_t parent, const std::string& name, const Table& table, const ChunkFilters& filters);
Table read_table(hid_t dataset, const std::string& what);

}  // namespace stethogen::bundle::h5
