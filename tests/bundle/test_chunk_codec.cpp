// bundle/chunk_codec against libhdf5 itself (the reference implementation of its filters): chunks
// filtered here must be the bytes HDF5's shuffle + deflate + Fletcher32 pipeline stores, and
// chunks made with the run-length strategy or without deflate must read back exactly through
// HDF5's ordinary decoding (which also verifies each Fletcher32 checksum).
#include <catch2/catch.hpp>

#include <hdf5.h>

#include <cstdint>
#include <vector>

#include "bundle/chunk_codec.hpp"
#include "bundle/hdf5_io.hpp"
#include "core/random.hpp"
#include "temp_dir.hpp"

using namespace stethogen;
using namespace stethogen::bundle;

namespace {

// Noisy audio-like float32 and int16 rows, and label runs as uint8 (invented data).
std::vector<float> noisy_floats(std::size_t n) {
  RandomStream rng(11, 3, Stream::plan);
  std::vector<float> v(n);
  for (std::size_t i = 0; i < n; ++i) v[i] = static_cast<float>(0.3 * std::sin(0.01 * double(i)) + 0.05 * rng.normal());
  return v;
}
std::vector<std::int16_t> noisy_int16(std::size_t n) {
  std::vector<std::int16_t> v(n);
  const std::vector<float> f = noisy_floats(n);
  for (std::size_t i = 0; i < n; ++i) v[i] = static_cast<std::int16_t>(f[i] * 20000.0f);
  return v;
}
std::vector<std::uint8_t> label_runs(std::size_t n) {
  std::vector<std::uint8_t> v(n);
  for (std::size_t i = 0; i < n; ++i) v[i] = static_cast<std::uint8_t>((i / 333) % 5);
  return v;
}

hid_t mem_type(StoredType t) {
  switch (t) {
    case StoredType::u8: return H5T_NATIVE_UINT8;
    case StoredType::i16: return H5T_NATIVE_INT16;
    case StoredType::i32: return H5T_NATIVE_INT32;
    case StoredType::f32: return H5T_NATIVE_FLOAT;
    case StoredType::packed: break;
  }
  return -1;
}

// Writes `data` through HDF5's own filters and returns the stored chunk bytes, in chunk order.
std::vector<std::vector<unsigned char>> hdf5_chunks(hid_t file, const std::string& name, const void* data,
                                                    std::size_t rows, std::size_t cols, StoredType type,
                                                    std::size_t chunk_cols, const ChunkFilters& f) {
  h5::ArraySpec spec;
  spec.rows = rows;
  spec.cols = cols;
  spec.chunk_cols = chunk_cols;
  spec.gzip_level = f.deflate_level;
  spec.shuffle = f.shuffle;
  h5::Id ds = h5::write_array(file, name, data, mem_type(type), h5::file_type_of(type), spec);
  std::vector<std::vector<unsigned char>> chunks;
  const std::size_t cw = std::min(chunk_cols, cols);
  for (hsize_t r = 0; r < rows; ++r)
    for (hsize_t c = 0; c < cols; c += cw) {
      const hsize_t offset[2] = {r, c};
      hsize_t bytes = 0;
      REQUIRE(H5Dget_chunk_storage_size(ds, offset, &bytes) >= 0);
      std::vector<unsigned char> buf(bytes);
      std::uint32_t mask = 0xffffffff;
      REQUIRE(H5Dread_chunk(ds, H5P_DEFAULT, offset, &mask, buf.data()) >= 0);
      REQUIRE(mask == 0);  // every filter applied
      chunks.push_back(std::move(buf));
    }
  return chunks;
}

}  // namespace

TEST_CASE("filtered chunks are the bytes libhdf5's shuffle, deflate and Fletcher32 filters store", "[chunk_codec]") {
  test::TempDir dir;
  h5::init();
  std::lock_guard guard(h5::lock());
  h5::Id file(H5Fcreate((dir.path() / "ref.h5").c_str(), H5F_ACC_TRUNC, H5P_DEFAULT, H5P_DEFAULT));
  REQUIRE(file.valid());
  // 2 rows of 20 000: the second chunk of each row is partial (zero padded by HDF5).
  const std::size_t rows = 2, cols = 20000, chunk = 16384;
  const std::vector<float> f32 = noisy_floats(rows * cols);
  const std::vector<std::int16_t> i16 = noisy_int16(rows * cols);
  const std::vector<std::uint8_t> u8 = label_runs(rows * cols);
  struct Case {
    const char* name;
    const void* data;
    StoredType type;
    ChunkFilters filters;
  };
  const std::vector<Case> cases = {
      {"f32_shuffle_deflate4", f32.data(), StoredType::f32, {true, 4, true}},
      {"f32_plain", f32.data(), StoredType::f32, {false, 0, true}},
      {"i16_shuffle_deflate1", i16.data(), StoredType::i16, {true, 1, true}},
      {"u8_deflate4", u8.data(), StoredType::u8, {false, 4, true}},
  };
  for (const Case& c : cases) {
    INFO(c.name);
    const auto expected = hdf5_chunks(file, c.name, c.data, rows, cols, c.type, chunk, c.filters);
    const EncodedArray mine = encode_array(c.data, rows, cols, false, c.type, chunk, c.filters);
    REQUIRE(mine.chunks.size() == expected.size());
    for (std::size_t k = 0; k < expected.size(); ++k) REQUIRE(mine.chunks[k] == expected[k]);
  }
  // An odd byte count exercises Fletcher32's last-byte rule: 1 row of 7 uint8 values, no deflate.
  const auto odd = hdf5_chunks(file, "odd", u8.data(), 1, 7, StoredType::u8, 7, {false, 0, true});
  REQUIRE(encode_array(u8.data(), 1, 7, false, StoredType::u8, 7, {false, 0, true}).chunks == odd);
}

TEST_CASE("chunks stored with H5Dwrite_chunk read back exactly through HDF5's decoding", "[chunk_codec]") {
  test::TempDir dir;
  h5::init();
  std::lock_guard guard(h5::lock());
  h5::Id file(H5Fcreate((dir.path() / "mine.h5").c_str(), H5F_ACC_TRUNC, H5P_DEFAULT, H5P_DEFAULT));
  REQUIRE(file.valid());
  const std::size_t rows = 3, cols = 40000;
  const std::vector<float> f32 = noisy_floats(rows * cols);
  const std::vector<std::int16_t> i16 = noisy_int16(rows * cols);
  const std::vector<std::uint8_t> u8 = label_runs(rows * cols);
  const ChunkFilters run_length{true, 1, true, true}, plain{false, 0, true};
  for (const ChunkFilters& f : {run_length, plain}) {
    const std::string tag = f.deflate_level ? "rle" : "plain";
    {
      h5::Id ds = h5::write_encoded(file, "f32_" + tag, encode_array(f32.data(), rows, cols, false, StoredType::f32, 16384, f));
      std::vector<float> back(f32.size());
      h5::read_all(ds, H5T_NATIVE_FLOAT, back.data(), "f32");
      REQUIRE(back == f32);
    }
    {
      h5::Id ds = h5::write_encoded(file, "i16_" + tag, encode_array(i16.data(), rows, cols, false, StoredType::i16, 16384, f));
      std::vector<std::int16_t> back(i16.size());
      h5::read_all(ds, H5T_NATIVE_INT16, back.data(), "i16");
      REQUIRE(back == i16);
    }
    {
      // 1-D, as the hemodynamic traces are stored.
      h5::Id ds = h5::write_encoded(file, "u8_" + tag, encode_array(u8.data(), 1, 5000, true, StoredType::u8, 16384, f));
      REQUIRE(h5::shape(ds) == std::vector<std::uint64_t>{5000});
      std::vector<std::uint8_t> back(5000);
      h5::read_all(ds, H5T_NATIVE_UINT8, back.data(), "u8");
      REQUIRE(std::equal(back.begin(), back.end(), u8.begin()));
    }
  }
}

TEST_CASE("a damaged chunk fails its Fletcher32 check on read", "[chunk_codec]") {
  test::TempDir dir;
  h5::init();
  std::lock_guard guard(h5::lock());
  h5::Id file(H5Fcreate((dir.path() / "bad.h5").c_str(), H5F_ACC_TRUNC, H5P_DEFAULT, H5P_DEFAULT));
  const std::vector<float> f32 = noisy_floats(1000);
  EncodedArray a = encode_array(f32.data(), 1, 1000, false, StoredType::f32, 1000, {false, 0, true});
  a.chunks[0][100] ^= 0x01;  // one bit flipped after the checksum was computed
  h5::Id ds = h5::write_encoded(file, "bad", a);
  std::vector<float> back(f32.size());
  REQUIRE_THROWS(h5::read_all(ds, H5T_NATIVE_FLOAT, back.data(), "bad"));
}

// libhdf5's own checksum routine (exported by the library, declared only in its private headers).
extern "C" uint32_t H5_checksum_fletcher32(const void* data, size_t len);

TEST_CASE("Fletcher32 equals libhdf5's H5_checksum_fletcher32 for any length and content", "[chunk_codec]") {
  RandomStream rng(5, 1, Stream::plan);
  // Lengths around the 360-word block (720 bytes), odd lengths, all-ones words (the sums' worst
  // case for overflow) and random bytes.
  std::vector<std::size_t> lengths = {0, 1, 2, 3, 719, 720, 721, 1440, 1441, 65536, 60004, 100001};
  for (int k = 0; k < 40; ++k) lengths.push_back(static_cast<std::size_t>(rng.uniform() * 5000));
  for (std::size_t n : lengths)
    for (int fill = 0; fill < 3; ++fill) {
      std::vector<unsigned char> bytes(n);
      for (unsigned char& b : bytes)
        b = fill == 0 ? 0xff : fill == 1 ? static_cast<unsigned char>(rng.uniform() * 256) : 0x00;
      INFO("length " << n << ", fill " << fill);
      REQUIRE(fletcher32(bytes.data(), n) == H5_checksum_fletcher32(bytes.data(), n));
    }
}
