// HDF5 chunk filtering done outside HDF5: byte shuffle, deflate (zlib) and Fletcher32 computed
// here, so that synthesis threads can do the costly part of writing while the single HDF5 writer
// thread only stores finished chunks (H5Dwrite_chunk). The bytes are exactly what HDF5's own
// built-in filters produce (tests/bundle/test_chunk_codec.cpp checks them against libhdf5), so
// any HDF5 reader decodes them with its standard filters. No HDF5 call here: thread-safe.
#pragma once

#include <cstddef>
#include <cstdint>
#include <string>
#include <vector>

#include "bundle/index_row.hpp"
#include "core/record.hpp"
#include "core/types.hpp"
#include "recipe/compression.hpp"

namespace stethogen::bundle {

// Filters of one dataset, applied in this order (the order HDF5 records them in): shuffle,
// deflate, Fletcher32. deflate_level 0 = no deflate filter; shuffle only goes with deflate.
// run_length: zlib's Z_RLE strategy (matches of distance 1 only) instead of the default; the
// stream is ordinary deflate that every inflate decodes, about 3x faster to make than level 1.
struct ChunkFilters {
  bool shuffle = false;
  int deflate_level = 0;
  bool fletcher32 = true;
  bool run_length = false;
  bool operator==(const ChunkFilters&) const = default;
};

// Stored element types (little-endian in the file and in the chunk bytes); packed = rows of a
// packed compound table (bundle/table_codec.hpp), whose size the array records.
enum class StoredType : unsigned char { u8, i16, i32, f32, packed };
std::size_t element_size(StoredType t);  // 0 for packed

// A [rows, cols] array (1-D when one_d) as filtered chunks of [1, chunk_cols] (the last chunk of a
// row zero-padded, as HDF5 pads with the fill value), in the order row 0 chunk 0, row 0 chunk 1, ...
struct EncodedArray {
  std::size_t rows = 0, cols = 0;
  bool one_d = false;
  std::size_t chunk_cols = 0;  // min(requested, cols); 0 for an empty array
  StoredType type = StoredType::f32;
  std::size_t element_bytes = 4;
  ChunkFilters filters;
  std::vector<std::vector<unsigned char>> chunks;
  std::size_t chunks_per_row() const { return chunk_cols ? (cols + chunk_cols - 1) / chunk_cols : 0; }
};

// data: rows * cols elements of `type`, row-major, native little-endian.
EncodedArray encode_array(const void* data, std::size_t rows, std::size_t cols, bool one_d, StoredType type,
                          std::size_t chunk_cols, const ChunkFilters& filters);
// The same for elements of element_bytes each (packed table rows: type = packed).
EncodedArray encode_elements(const void* data, std::size_t rows, std::size_t cols, bool one_d, StoredType type,
                             std::size_t element_bytes, std::size_t chunk_cols, const ChunkFilters& filters);

// HDF5's Fletcher32 (H5_checksum_fletcher32): Fletcher (1982), IEEE Trans. Commun. 30(1), on
// 16-bit big-endian words, an odd last byte as the high byte of a word.
std::uint32_t fletcher32(const unsigned char* data, std::size_t n_bytes);

// What a dataset holds, for choosing its filters.
enum class DatasetRole : unsigned char { pcg, pcg_clean, states, hemodynamics, table };
ChunkFilters filters_for(DatasetRole role, SampleFormat format, Compression compression);

// pcg-like storage: float32 as is, integers round(value * full scale) clipped (docs/bundle-format.md).
EncodedArray encode_signal(const SiteArray<float>& signal, SampleFormat format, const ChunkFilters& filters,
                           std::size_t chunk_cols);

// Chunk length for n samples in chunks of at most `most`, split evenly (a 30 s signal at 4 kHz:
// 8 chunks of 15000 instead of 8 of 16384, the last mostly padding).
std::size_t balanced_chunk(std::size_t n, std::size_t most);

// The chunked arrays of one record, filtered (the expensive part of writing it); the tables and
// attributes are left to the writer (small).
struct EncodedRecord {
  EncodedArray pcg, pcg_clean, states;
  std::vector<EncodedArray> hemodynamics;  // one per channel of record.hemodynamics
  bool has_pcg_clean = false, has_states = false, has_hemodynamics = false;
  Compression compression = Compression::fast;
  SampleFormat format = SampleFormat::float32;
};
EncodedRecord encode_record(const Record& record, const RecordParts& parts, SampleFormat format,
                            Compression compression);

}  // namespace stethogen::bundle
