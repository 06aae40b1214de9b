#include "bundle/scratch_file.hpp"

#include <fcntl.h>
#include <unistd.h>
#include <zlib.h>

#include <cerrno>
#include <cstring>
#include <stdexcept>
#include <string>
#include <vector>

#include <fmt/format.h>

#include "core/error.hpp"

namespace stethogen::bundle {

namespace fs = std::filesystem;

namespace {

constexpr char kMagic[8] = {'S', 'T', 'G', 'S', 'C', 'R', '0', '2'};
// Sanity bounds against a damaged header (a 30 s record has about 100 chunks and 40 attributes).
constexpr std::uint64_t kMaxCount = 1u << 24;

std::uint32_t crc(const unsigned char* data, std::size_t n) {
  return static_cast<std::uint32_t>(crc32(0, data, static_cast<uInt>(n)));
}

// The check value of a chunk: its Fletcher32 trailer (verified on load), or a CRC-32.
std::uint32_t chunk_check(const std::vector<unsigned char>& chunk, bool fletcher) {
  if (fletcher && chunk.size() >= 4) {
    std::uint32_t v = 0;
    std::memcpy(&v, chunk.data() + chunk.size() - 4, 4);
    return v;
  }
  return crc(chunk.data(), chunk.size());
}
bool chunk_intact(const std::vector<unsigned char>& chunk, bool fletcher, std::uint32_t check) {
  if (fletcher && chunk.size() >= 4)
    return chunk_check(chunk, true) == check && fletcher32(chunk.data(), chunk.size() - 4) == check;
  return crc(chunk.data(), chunk.size()) == check;
}

class Out {
 public:
  std::vector<unsigned char> bytes;
  template <typename T>
  void raw(T v) {
    const auto* p = reinterpret_cast<const unsigned char*>(&v);
    bytes.insert(bytes.end(), p, p + sizeof v);
  }
  void u8(unsigned v) { raw(static_cast<std::uint8_t>(v)); }
  void u64(std::uint64_t v) { raw(v); }
  void str(const std::string& s) {
    u64(s.size());
    bytes.insert(bytes.end(), s.begin(), s.end());
  }
  void strs(const std::vector<std::string>& v) {
    u64(v.size());
    for (const std::string& s : v) str(s);
  }
};

class In {
 public:
  In(const unsigned char* p, std::size_t n) : p_(p), end_(p + n) {}
  template <typename T>
  T raw() {
    need(sizeof(T));
    T v;
    std::memcpy(&v, p_, sizeof v);
    p_ += sizeof v;
    return v;
  }
  unsigned u8() { return raw<std::uint8_t>(); }
  std::uint64_t u64() { return raw<std::uint64_t>(); }
  std::uint64_t count() {
    std::uint64_t n = u64();
    if (n > kMaxCount) throw std::runtime_error("implausible count");
    return n;
  }
  std::string str() {
    std::uint64_t n = u64();
    need(n);
    std::string s(reinterpret_cast<const char*>(p_), n);
    p_ += n;
    return s;
  }
  std::vector<std::string> strs() {
    std::vector<std::string> v(count());
    for (std::string& s : v) s = str();
    return v;
  }
  bool done() const { return p_ == end_; }
  // The next n bytes, skipped over.
  const unsigned char* take(std::uint64_t n) {
    need(n);
    const unsigned char* p = p_;
    p_ += n;
    return p;
  }

 private:
  void need(std::uint64_t n) {
    if (n > static_cast<std::uint64_t>(end_ - p_)) throw std::runtime_error("truncated header");
  }
  const unsigned char* p_;
  const unsigned char* end_;
};

void put_row(Out& o, const IndexRow& r) {
  o.str(r.record_id);
  o.u64(r.record_index);
  o.str(r.population);
  o.str(r.state);
  for (double v : {r.exercise_intensity, r.severity, r.heart_rate_bpm, r.cardiac_output_l_min, r.lv_ejection_fraction,
                   r.rv_ejection_fraction, r.snr_db, r.snr_achieved_db, r.duration_s})
    o.raw(v);
  o.raw(r.sample_rate_hz);
  o.raw(r.n_samples);
  o.raw(r.n_sites);
  o.raw(r.n_beats);
  o.str(r.sensor);
  o.str(r.noise_profile);
}
IndexRow get_row(In& in) {
  IndexRow r;
  r.record_id = in.str();
  r.record_index = in.u64();
  r.population = in.str();
  r.state = in.str();
  for (double* v : {&r.exercise_intensity, &r.severity, &r.heart_rate_bpm, &r.cardiac_output_l_min,
                    &r.lv_ejection_fraction, &r.rv_ejection_fraction, &r.snr_db, &r.snr_achieved_db, &r.duration_s})
    *v = in.raw<double>();
  r.sample_rate_hz = in.raw<std::int32_t>();
  r.n_samples = in.raw<std::int64_t>();
  r.n_sites = in.raw<std::int32_t>();
  r.n_beats = in.raw<std::int32_t>();
  r.sensor = in.str();
  r.noise_profile = in.str();
  return r;
}

void put_attributes(Out& o, const std::vector<StagedAttribute>& attributes) {
  o.u64(attributes.size());
  for (const StagedAttribute& a : attributes) {
    o.str(a.name);
    o.u8(static_cast<unsigned>(a.kind));
    o.strs(a.strings);
    o.u64(a.ints.size());
    for (std::int64_t v : a.ints) o.raw(v);
    o.raw(a.real);
  }
}
std::vector<StagedAttribute> get_attributes(In& in) {
  std::vector<StagedAttribute> out(in.count());
  for (StagedAttribute& a : out) {
    a.name = in.str();
    const unsigned kind = in.u8();
    if (kind > static_cast<unsigned>(StagedAttribute::Kind::i32s)) throw std::runtime_error("bad attribute kind");
    a.kind = static_cast<StagedAttribute::Kind>(kind);
    a.strings = in.strs();
    a.ints.resize(in.count());
    for (std::int64_t& v : a.ints) v = in.raw<std::int64_t>();
    a.real = in.raw<double>();
  }
  return out;
}

// The array's description and where its chunks are in the data file (offsets from `next`).
void put_array(Out& o, const EncodedArray& a, const std::vector<std::uint64_t>& offsets, std::size_t& next) {
  for (std::uint64_t v : {std::uint64_t(a.rows), std::uint64_t(a.cols), std::uint64_t(a.chunk_cols),
                          std::uint64_t(a.element_bytes)})
    o.u64(v);
  o.u8(a.one_d);
  o.u8(static_cast<unsigned>(a.type));
  o.u8(a.filters.shuffle);
  o.raw(static_cast<std::int32_t>(a.filters.deflate_level));
  o.u8(a.filters.fletcher32);
  o.u8(a.filters.run_length);
  o.u64(a.chunks.size());
  for (const auto& c : a.chunks) {
    o.u64(c.size());
    o.raw(chunk_check(c, a.filters.fletcher32));
    o.u64(offsets.at(next++));
  }
}
// Fills everything but the chunk bytes; their sizes, checks and offsets go to the entry.
void get_array(In& in, EncodedArray& a, ScratchEntry& e) {
  a.rows = in.u64();
  a.cols = in.u64();
  a.chunk_cols = in.u64();
  a.element_bytes = in.u64();
  a.one_d = in.u8();
  const unsigned type = in.u8();
  if (type > static_cast<unsigned>(StoredType::packed)) throw std::runtime_error("bad element type");
  a.type = static_cast<StoredType>(type);
  a.filters.shuffle = in.u8();
  a.filters.deflate_level = in.raw<std::int32_t>();
  a.filters.fletcher32 = in.u8();
  a.filters.run_length = in.u8();
  a.chunks.resize(in.count());
  for (std::size_t k = 0; k < a.chunks.size(); ++k) {
    const std::uint64_t n = in.u64();
    if (n > (std::uint64_t(1) << 32)) throw std::runtime_error("implausible chunk size");
    e.chunk_bytes.push_back(n);  // read (and sized) by load_chunks
    e.chunk_checks.push_back(in.raw<std::uint32_t>());
    e.chunk_offsets.push_back(in.u64());
  }
}

std::vector<unsigned char> entry_bytes(const ScratchEntry& e) {
  Out o;
  if (e.skipped) {
    o.u8(1);
    o.str(e.skipped->record_id);
    o.u64(e.skipped->record_index);
    o.str(e.skipped->reason);
    return std::move(o.bytes);
  }
  const StagedRecord& r = *e.record;
  std::size_t chunks = 0;
  for (const StagedObject& obj : r.objects) chunks += obj.data.chunks.size();
  if (e.chunk_offsets.size() != chunks) throw std::logic_error("scratch_bytes: one offset per chunk");
  o.u8(0);
  o.u64(e.generation);
  put_row(o, r.row);
  put_attributes(o, r.attributes);
  o.u64(r.objects.size());
  std::size_t next = 0;
  for (const StagedObject& obj : r.objects) {
    o.u8(obj.group);
    o.str(obj.path);
    put_attributes(o, obj.attributes);
    o.u64(obj.members.size());
    for (const TableMember& m : obj.members) {
      o.str(m.name);
      o.u8(static_cast<unsigned>(m.kind));
      o.u64(m.offset);
      o.u64(m.bytes);
    }
    put_array(o, obj.data, e.chunk_offsets, next);
  }
  return std::move(o.bytes);
}

[[noreturn]] void fail(const fs::path& path, const std::string& what, int err) {
  throw RuntimeFailure(fmt::format("{}: {}: {}", path.string(), what, std::strerror(err)));
}

class File {
 public:
  File(const fs::path& path, int flags) : path_(path), fd_(::open(path.c_str(), flags | O_CLOEXEC, 0644)) {
    if (fd_ < 0) fail(path, flags & O_CREAT ? "cannot create" : "cannot open", errno);
  }
  ~File() {
    if (fd_ >= 0) ::close(fd_);
  }
  File(const File&) = delete;
  File& operator=(const File&) = delete;
  void write(const unsigned char* p, std::size_t n) {
    while (n) {
      const ssize_t k = ::write(fd_, p, n);
      if (k < 0 && errno == EINTR) continue;
      if (k <= 0) fail(path_, "cannot write", k < 0 ? errno : ENOSPC);
      p += k;
      n -= static_cast<std::size_t>(k);
    }
  }
  // False at a premature end of file.
  bool read(unsigned char* p, std::size_t n) {
    while (n) {
      const ssize_t k = ::read(fd_, p, n);
      if (k < 0 && errno == EINTR) continue;
      if (k < 0) fail(path_, "cannot read", errno);
      if (k == 0) return false;
      p += k;
      n -= static_cast<std::size_t>(k);
    }
    return true;
  }
  // False at a premature end of file.
  bool read_at(unsigned char* p, std::size_t n, std::uint64_t offset) {
    while (n) {
      const ssize_t k = ::pread(fd_, p, n, static_cast<off_t>(offset));
      if (k < 0 && errno == EINTR) continue;
      if (k < 0) fail(path_, "cannot read", errno);
      if (k == 0) return false;
      p += k;
      offset += static_cast<std::uint64_t>(k);
      n -= static_cast<std::size_t>(k);
    }
    return true;
  }
  void close() {
    const int fd = fd_;
    fd_ = -1;
    if (::close(fd) != 0) fail(path_, "cannot write", errno);
  }

 private:
  fs::path path_;
  int fd_;
};

}  // namespace

std::vector<unsigned char> scratch_bytes(const ScratchEntry& entry) {
  if (entry.record.has_value() == entry.skipped.has_value())
    throw std::logic_error("scratch_bytes: a record or a skipped note, not both");
  return entry_bytes(entry);
}

void save_scratch(const fs::path& path, const std::vector<std::vector<unsigned char>>& entries) {
  Out header;
  header.u64(entries.size());
  for (const auto& e : entries) {
    header.u64(e.size());
    header.bytes.insert(header.bytes.end(), e.begin(), e.end());
  }
  Out file;
  file.bytes.assign(kMagic, kMagic + sizeof kMagic);
  file.u64(header.bytes.size());
  file.bytes.insert(file.bytes.end(), header.bytes.begin(), header.bytes.end());
  file.raw(crc(header.bytes.data(), header.bytes.size()));
  const fs::path temp = path.string() + ".partial";
  try {
    File f(temp, O_WRONLY | O_CREAT | O_TRUNC);
    f.write(file.bytes.data(), file.bytes.size());
    f.close();
  } catch (...) {
    std::error_code ec;
    fs::remove(temp, ec);
    throw;
  }
  std::error_code ec;
  fs::rename(temp, path, ec);
  if (ec) {
    fs::remove(temp, ec);
    throw RuntimeFailure(fmt::format("{}: cannot rename to {}: {}", temp.string(), path.string(), ec.message()));
  }
}

std::string data_file_name(std::uint64_t generation) { return fmt::format("bundle-{}.h5", generation); }

namespace {

ScratchEntry parse_entry(In& in) {
  ScratchEntry e;
  if (in.u8() == 1) {
    SkippedRecord k;
    k.record_id = in.str();
    k.record_index = in.u64();
    k.reason = in.str();
    e.skipped = std::move(k);
    return e;
  }
  StagedRecord r;
  e.generation = in.u64();
  r.row = get_row(in);
  r.attributes = get_attributes(in);
  r.objects.resize(in.count());
  for (StagedObject& obj : r.objects) {
    obj.group = in.u8();
    obj.path = in.str();
    obj.attributes = get_attributes(in);
    obj.members.resize(in.count());
    for (TableMember& m : obj.members) {
      m.name = in.str();
      const unsigned kind = in.u8();
      if (kind > static_cast<unsigned>(ColumnKind::str)) throw std::runtime_error("bad column kind");
      m.kind = static_cast<ColumnKind>(kind);
      m.offset = in.u64();
      m.bytes = in.u64();
    }
    get_array(in, obj.data, e);
  }
  e.record = std::move(r);
  return e;
}

RuntimeFailure damaged(const fs::path& path, const std::string& why) {
  return RuntimeFailure(fmt::format("{}: damaged scratch file ({}); pass --force to start over", path.string(), why));
}

}  // namespace

std::vector<ScratchEntry> load_scratch(const fs::path& path) {
  File f(path, O_RDONLY);
  unsigned char start[sizeof kMagic + 8];
  if (!f.read(start, sizeof start) || std::memcmp(start, kMagic, sizeof kMagic) != 0) throw damaged(path, "no header");
  std::uint64_t header_bytes = 0;
  std::memcpy(&header_bytes, start + sizeof kMagic, 8);
  if (header_bytes > (std::uint64_t(1) << 30)) throw damaged(path, "implausible header size");
  std::vector<unsigned char> header(header_bytes + 4);
  if (!f.read(header.data(), header.size())) throw damaged(path, "truncated header");
  std::uint32_t stored_crc = 0;
  std::memcpy(&stored_crc, header.data() + header_bytes, 4);
  if (crc(header.data(), header_bytes) != stored_crc) throw damaged(path, "header checksum");
  unsigned char extra = 0;
  if (f.read(&extra, 1)) throw damaged(path, "trailing bytes");

  std::vector<ScratchEntry> entries;
  try {
    In in(header.data(), header_bytes);
    entries.resize(in.count());
    for (ScratchEntry& e : entries) {
      const std::uint64_t size = in.u64();
      In one(in.take(size), size);
      e = parse_entry(one);
      if (!one.done()) throw std::runtime_error("trailing entry bytes");
    }
    if (!in.done()) throw std::runtime_error("trailing header bytes");
  } catch (const std::runtime_error& err) {
    throw damaged(path, err.what());
  }
  return entries;
}

void load_chunks(ScratchEntry& e, const fs::path& data_dir, const fs::path& path) {
  if (!e.record) return;
  const fs::path data_path = data_dir / data_file_name(e.generation);
  if (!fs::exists(data_path)) throw damaged(path, data_path.filename().string() + " is missing");
  File data(data_path, O_RDONLY);
  std::size_t k = 0;
  for (StagedObject& obj : e.record->objects)
    for (auto& c : obj.data.chunks) {
      c.resize(e.chunk_bytes[k]);
      const auto where = [&] { return fmt::format("chunk {} of {} in {}", k, obj.path, data_path.filename().string()); };
      if (!data.read_at(c.data(), c.size(), e.chunk_offsets[k])) throw damaged(path, where() + ": cut short");
      if (!chunk_intact(c, obj.data.filters.fletcher32, e.chunk_checks[k])) throw damaged(path, where() + ": checksum");
      ++k;
    }
}

}  // namespace stethogen::bundle
