#include "bundle/chunk_codec.hpp"

#include <zlib.h>

#if defined(__SSE2__)
#include <emmintrin.h>
#endif

#include <algorithm>
#include <bit>
#include <cmath>
#include <cstring>
#include <optional>
#include <stdexcept>

#include "bundle/writer.hpp"
#include "core/error.hpp"

namespace stethogen::bundle {

static_assert(std::endian::native == std::endian::little, "chunk bytes are written in native order");

std::size_t element_size(StoredType t) {
  switch (t) {
    case StoredType::u8: return 1;
    case StoredType::i16: return 2;
    case StoredType::i32: return 4;
    case StoredType::f32: return 4;
    case StoredType::packed: return 0;
  }
  return 1;
}

std::uint32_t fletcher32(const unsigned char* data, std::size_t n_bytes) {
  // Sums folded every 360 words, before they can overflow 32 bits (as in HDF5's H5checksum.c).
  // A full block runs in 8 independent lanes (SSE2, baseline on x86-64): lane l takes words l, l + 8, ...;
  // a[l] sums them and b[l] sums a[l]'s running values, and since word j of the block enters
  // sum2 (n - j) times, the block adds n * sum1 + sum_l (8 b[l] - l a[l]) to sum2. All in
  // wrapping 32-bit arithmetic, so the result equals the word-by-word loop's bit for bit.
  constexpr std::size_t kBlock = 360, kLanes = 8;
  std::uint32_t sum1 = 0, sum2 = 0;
  std::size_t words = n_bytes / 2;
  while (words) {
    const std::size_t block = std::min(words, kBlock);
    words -= block;
    if (block == kBlock) {
      std::uint32_t a[kLanes] = {}, b[kLanes] = {};
#if defined(__SSE2__)
      const __m128i zero = _mm_setzero_si128();
      __m128i a_lo = zero, a_hi = zero, b_lo = zero, b_hi = zero;
      for (std::size_t k = 0; k < kBlock / kLanes; ++k, data += 2 * kLanes) {
        __m128i w = _mm_loadu_si128(reinterpret_cast<const __m128i*>(data));
        w = _mm_or_si128(_mm_slli_epi16(w, 8), _mm_srli_epi16(w, 8));  // big-endian words
        a_lo = _mm_add_epi32(a_lo, _mm_unpacklo_epi16(w, zero));        // lanes 0-3
        a_hi = _mm_add_epi32(a_hi, _mm_unpackhi_epi16(w, zero));        // lanes 4-7
        b_lo = _mm_add_epi32(b_lo, a_lo);
        b_hi = _mm_add_epi32(b_hi, a_hi);
      }
      _mm_storeu_si128(reinterpret_cast<__m128i*>(a), a_lo);
      _mm_storeu_si128(reinterpret_cast<__m128i*>(a + 4), a_hi);
      _mm_storeu_si128(reinterpret_cast<__m128i*>(b), b_lo);
      _mm_storeu_si128(reinterpret_cast<__m128i*>(b + 4), b_hi);
#else
      for (std::size_t k = 0; k < kBlock / kLanes; ++k, data += 2 * kLanes)
        for (std::size_t l = 0; l < kLanes; ++l) {
          a[l] += (std::uint32_t(data[2 * l]) << 8) | data[2 * l + 1];
          b[l] += a[l];
        }
#endif
      std::uint32_t add1 = 0, add2 = 0;
      for (std::size_t l = 0; l < kLanes; ++l) {
        add1 += a[l];
        add2 += std::uint32_t(kLanes) * b[l] - std::uint32_t(l) * a[l];
      }
      sum2 += std::uint32_t(kBlock) * sum1 + add2;
      sum1 += add1;
    } else {
      for (std::size_t w = block; w; --w, data += 2) {
        sum1 += (std::uint32_t(data[0]) << 8) | data[1];
        sum2 += sum1;
      }
    }
    sum1 = (sum1 & 0xffff) + (sum1 >> 16);
    sum2 = (sum2 & 0xffff) + (sum2 >> 16);
  }
  if (n_bytes % 2) {
    sum1 += std::uint32_t(*data) << 8;
    sum2 += sum1;
    sum1 = (sum1 & 0xffff) + (sum1 >> 16);
    sum2 = (sum2 & 0xffff) + (sum2 >> 16);
  }
  sum1 = (sum1 & 0xffff) + (sum1 >> 16);
  sum2 = (sum2 & 0xffff) + (sum2 >> 16);
  return (sum2 << 16) | sum1;
}

namespace {

// HDF5's shuffle filter: byte k of every element together, k = 0 .. size-1.
template <std::size_t Size>
void shuffle_fixed(const unsigned char* in, unsigned char* out, std::size_t elements) {
  for (std::size_t e = 0; e < elements; ++e)
    for (std::size_t k = 0; k < Size; ++k) out[k * elements + e] = in[e * Size + k];
}
void shuffle_bytes(const unsigned char* in, unsigned char* out, std::size_t elements, std::size_t size) {
  if (size == 2) return shuffle_fixed<2>(in, out, elements);
  if (size == 4) return shuffle_fixed<4>(in, out, elements);
  for (std::size_t k = 0; k < size; ++k)
    for (std::size_t e = 0; e < elements; ++e) out[k * elements + e] = in[e * size + k];
}

// One zlib stream reused for every chunk of an array. With the default strategy its output is
// compress2's (deflateInit2 with compress2's window and memory level), i.e. HDF5's own filter's.
class Deflater {
 public:
  Deflater(int level, bool run_length) {
    if (deflateInit2(&z_, level, Z_DEFLATED, MAX_WBITS, 8, run_length ? Z_RLE : Z_DEFAULT_STRATEGY) != Z_OK)
      throw RuntimeFailure("deflate: cannot initialise zlib");
  }
  ~Deflater() { deflateEnd(&z_); }
  Deflater(const Deflater&) = delete;
  Deflater& operator=(const Deflater&) = delete;

  // out gets the compressed bytes (with room for the 4 checksum bytes). They are made in a buffer
  // kept between chunks, so only the (small) result is allocated per chunk.
  void compress(const unsigned char* src, std::size_t n, std::vector<unsigned char>& out) {
    deflateReset(&z_);
    const std::size_t bound = deflateBound(&z_, static_cast<uLong>(n));
    if (buffer_.size() < bound) buffer_.resize(bound);
    z_.next_in = const_cast<unsigned char*>(src);
    z_.avail_in = static_cast<uInt>(n);
    z_.next_out = buffer_.data();
    z_.avail_out = static_cast<uInt>(bound);
    int status = deflate(&z_, Z_FINISH);
    if (status != Z_STREAM_END) throw RuntimeFailure("deflate failed (zlib status " + std::to_string(status) + ")");
    out.clear();
    out.reserve(z_.total_out + 4);
    out.insert(out.end(), buffer_.data(), buffer_.data() + z_.total_out);
  }

 private:
  z_stream z_{};
  std::vector<unsigned char> buffer_;
};

// One chunk through the filter pipeline (the chunk has room for the 4 checksum bytes). `scratch`
// is reused between chunks.
std::vector<unsigned char> filter_chunk(std::vector<unsigned char> chunk, std::vector<unsigned char>& scratch,
                                        std::size_t elem, const ChunkFilters& f, Deflater* deflater) {
  if (deflater) {
    const unsigned char* src = chunk.data();
    if (f.shuffle && elem > 1) {
      scratch.resize(chunk.size());
      shuffle_bytes(chunk.data(), scratch.data(), chunk.size() / elem, elem);
      src = scratch.data();
    }
    std::vector<unsigned char> out;
    deflater->compress(src, chunk.size(), out);
    chunk.swap(out);
  }
  if (f.fletcher32) {
    const std::uint32_t sum = fletcher32(chunk.data(), chunk.size());
    for (int shift = 0; shift < 32; shift += 8) chunk.push_back(static_cast<unsigned char>(sum >> shift));
  }
  return chunk;
}

}  // namespace

EncodedArray encode_array(const void* data, std::size_t rows, std::size_t cols, bool one_d, StoredType type,
                          std::size_t chunk_cols, const ChunkFilters& filters) {
  return encode_elements(data, rows, cols, one_d, type, element_size(type), chunk_cols, filters);
}

EncodedArray encode_elements(const void* data, std::size_t rows, std::size_t cols, bool one_d, StoredType type,
                             std::size_t elem, std::size_t chunk_cols, const ChunkFilters& filters) {
  EncodedArray a;
  a.rows = rows;
  a.cols = cols;
  a.one_d = one_d;
  a.type = type;
  a.element_bytes = elem;
  a.filters = filters;
  if (filters.deflate_level == 0) a.filters.shuffle = false;
  if (rows == 0 || cols == 0) return a;
  a.chunk_cols = std::min(chunk_cols, cols);
  const auto* bytes = static_cast<const unsigned char*>(data);
  std::vector<unsigned char> scratch;
  std::optional<Deflater> deflater;
  if (a.filters.deflate_level > 0) deflater.emplace(a.filters.deflate_level, a.filters.run_length);
  a.chunks.reserve(rows * a.chunks_per_row());
  const std::size_t chunk_bytes = a.chunk_cols * elem;
  for (std::size_t r = 0; r < rows; ++r)
    for (std::size_t c0 = 0; c0 < cols; c0 += a.chunk_cols) {
      const std::size_t n = std::min(a.chunk_cols, cols - c0);
      const unsigned char* src = bytes + (r * cols + c0) * elem;
      std::vector<unsigned char> chunk;
      chunk.reserve(chunk_bytes + 4);  // room for the checksum without a reallocation
      chunk.insert(chunk.end(), src, src + n * elem);
      chunk.resize(chunk_bytes, 0);  // zero fill past the end
      a.chunks.push_back(filter_chunk(std::move(chunk), scratch, elem, a.filters, deflater ? &*deflater : nullptr));
    }
  return a;
}

ChunkFilters filters_for(DatasetRole role, SampleFormat format, Compression compression) {
  switch (compression) {
    case Compression::none: return {false, 0, true};
    case Compression::compact: return {role != DatasetRole::states, kGzipLevel, true};
    case Compression::fast: break;
  }
  // Chosen by measurement (docs/bundle-format.md, "Storage"): float32 audio saves 21-25 % for
  // about 10 ms of CPU per 30 s signal even with the run-length strategy, a third of the whole
  // record's budget, so it is stored plain; integer audio, labels and traces compress well and fast.
  // Float32 traces likewise: shuffle + run-length saves a quarter of their 360 KB per record for
  // about 2 ms of CPU (measured with bench records: 2.0 ms against 0.04 ms plain).
  const ChunkFilters run_length{true, 1, true, true}, plain{false, 0, true};
  switch (role) {
    case DatasetRole::pcg:
    case DatasetRole::pcg_clean: return format == SampleFormat::float32 ? plain : run_length;
    case DatasetRole::states: return {false, 1, true, true};
    case DatasetRole::hemodynamics: return plain;
    case DatasetRole::table: return run_length;
  }
  return run_length;
}

EncodedArray encode_signal(const SiteArray<float>& signal, SampleFormat format, const ChunkFilters& filters,
                           std::size_t chunk_cols) {
  if (format == SampleFormat::float32)
    return encode_array(signal.data.data(), signal.n_sites, signal.n_samples, false, StoredType::f32, chunk_cols,
                        filters);
  const std::int32_t full = format == SampleFormat::int16 ? kInt16FullScale : kInt24FullScale;
  auto quantize = [full](float x) {
    double v = std::isfinite(x) ? std::round(double(x) * full) : 0.0;
    return static_cast<std::int32_t>(std::clamp(v, -double(full), double(full)));
  };
  if (format == SampleFormat::int16) {
    std::vector<std::int16_t> q(signal.data.size());
    for (std::size_t i = 0; i < q.size(); ++i) q[i] = static_cast<std::int16_t>(quantize(signal.data[i]));
    return encode_array(q.data(), signal.n_sites, signal.n_samples, false, StoredType::i16, chunk_cols, filters);
  }
  std::vector<std::int32_t> q(signal.data.size());
  for (std::size_t i = 0; i < q.size(); ++i) q[i] = quantize(signal.data[i]);
  return encode_array(q.data(), signal.n_sites, signal.n_samples, false, StoredType::i32, chunk_cols, filters);
}

std::size_t balanced_chunk(std::size_t n, std::size_t most) {
  if (n == 0 || most == 0) return most;
  const std::size_t chunks = (n + most - 1) / most;
  return (n + chunks - 1) / chunks;
}

EncodedRecord encode_record(const Record& r, const RecordParts& parts, SampleFormat format, Compression compression) {
  EncodedRecord e;
  e.compression = compression;
  e.format = format;
  e.pcg = encode_signal(r.pcg, format, filters_for(DatasetRole::pcg, format, compression),
                        balanced_chunk(r.pcg.n_samples, kPcgChunkSamples));
  if (parts.pcg_clean && !r.pcg_clean.data.empty()) {
    e.has_pcg_clean = true;
    e.pcg_clean = encode_signal(r.pcg_clean, format, filters_for(DatasetRole::pcg_clean, format, compression),
                                balanced_chunk(r.pcg_clean.n_samples, kPcgChunkSamples));
  }
  if (parts.states && !r.states.data.empty()) {
    e.has_states = true;
    e.states = encode_array(r.states.data.data(), r.states.n_sites, r.states.n_samples, false, StoredType::u8,
                            balanced_chunk(r.states.n_samples, kPcgChunkSamples),
                            filters_for(DatasetRole::states, format, compression));
  }
  const HemodynamicTraces& h = r.hemodynamics;
  if (parts.hemodynamics && !h.names.empty()) {
    e.has_hemodynamics = true;
    const ChunkFilters f = filters_for(DatasetRole::hemodynamics, format, compression);
    const std::size_t chunk = balanced_chunk(h.data.n_samples, kPcgChunkSamples);
    for (std::size_t c = 0; c < h.names.size() && c < h.data.n_sites; ++c)
      e.hemodynamics.push_back(encode_array(h.data.row(c), 1, h.data.n_samples, true, StoredType::f32, chunk, f));
  }
  return e;
}

}  // namespace stethogen::bundle
