#include "bundle/reader.hpp"

#include <algorithm>
#include <cmath>

#include <fmt/format.h>
#include <fmt/ranges.h>

#include "bundle/reader_impl.hpp"
#include "bundle/schema.hpp"
#include "core/error.hpp"

namespace stethogen::bundle {

namespace fs = std::filesystem;

namespace {

std::string record_path(const std::string& id) { return "/records/" + id; }

herr_t collect_link(hid_t, const char* name, const H5L_info_t*, void* data) {
  static_cast<std::vector<std::string>*>(data)->emplace_back(name);
  return 0;
}

std::string dtype_name(hid_t type) {
  std::size_t size = H5Tget_size(type);
  switch (H5Tget_class(type)) {
    case H5T_FLOAT: return size == 4 ? "float32" : size == 8 ? "float64" : fmt::format("float{}", size * 8);
    case H5T_INTEGER:
      return fmt::format("{}int{}", H5Tget_sign(type) == H5T_SGN_NONE ? "u" : "", size * 8);
    case H5T_STRING: return "string";
    case H5T_COMPOUND: return "compound";
    default: return "other";
  }
}

}  // namespace

BundleReader::BundleReader(const fs::path& path) : impl_(std::make_unique<Impl>()) {
  std::lock_guard guard(h5::lock());
  h5::init();
  Impl& m = *impl_;
  m.path = path;
  const std::string p = path.string();
  std::error_code ec;
  if (!fs::is_regular_file(path, ec)) throw InputError(fmt::format("{}: no such bundle file", p));
  if (H5Fis_hdf5(path.c_str()) <= 0) {
    H5Eclear2(H5E_DEFAULT);
    throw InputError(fmt::format("{}: not an HDF5 file (or truncated); expected a {} file", p, kBundleFormatName));
  }
  m.file = h5::Id(H5Fopen(path.c_str(), H5F_ACC_RDONLY, H5P_DEFAULT));
  if (!m.file.valid())
    throw InputError(fmt::format("{}: cannot open as HDF5 ({}); the file is truncated or damaged", p, h5::error_reason()));
  hid_t root = m.file;
  if (!h5::has_attr(root, "format") || h5::attr_string(root, "format") != kBundleFormatName)
    throw InputError(fmt::format("{}: not a {} (root attribute 'format' is {})", p, kBundleFormatName,
                                 h5::has_attr(root, "format") ? "'" + h5::attr_string(root, "format") + "'" : "missing"));
  try {
    auto version = h5::attr_ints(root, "format_version");
    if (version.size() != 2) throw RuntimeFailure("format_version must be [major, minor]");
    if (version[0] != kBundleFormatMajor)
      throw InputError(fmt::format("{}: format version {}.{}; this program reads major version {}", p, version[0],
                                   version[1], kBundleFormatMajor));
    BundleAttributes& a = m.attributes;
    a.format = kBundleFormatName;
    a.format_version = {static_cast<int>(version[0]), static_cast<int>(version[1])};
    a.generator_version = h5::attr_string(root, "generator_version");
    a.recipe_toml = h5::attr_string(root, "recipe_toml");
    a.recipe_sha256 = h5::attr_string(root, "recipe_sha256");
    a.seed = h5::attr_u64(root, "seed");
    a.record_count = h5::attr_u64(root, "record_count");
    if (auto f = parse_sample_format(h5::attr_string(root, "sample_format"))) a.sample_format = *f;
    a.content = h5::attr_string(root, "content");
    a.compression = Compression::compact;
    if (h5::has_attr(root, "compression"))
      if (auto c = parse_compression(h5::attr_string(root, "compression"))) a.compression = *c;
    if (h5::has_attr(root, "shard")) {
      auto shard = h5::attr_ints(root, "shard");
      if (shard.size() == 2) {
        a.shard_index = static_cast<std::int32_t>(shard[0]);
        a.shard_count = static_cast<std::int32_t>(shard[1]);
      }
    }
    a.created_utc = h5::attr_string(root, "created_utc");
    static const std::vector<std::string> known = {"format", "format_version", "generator_version", "recipe_toml",
                                                   "recipe_sha256", "seed", "record_count", "sample_format",
                                                   "content", "compression", "shard", "created_utc"};
    for (const std::string& n : h5::attr_names(root))
      if (std::find(known.begin(), known.end(), n) == known.end()) a.extra.emplace_back(n, h5::attr_string(root, n));

    h5::Id index(h5::check(H5Dopen2(root, "/index", H5P_DEFAULT), "/index"));
    m.index = index_rows(h5::read_table(index, "/index"));
    if (h5::exists(root, "/skipped")) {
      h5::Id skipped(h5::check(H5Dopen2(root, "/skipped", H5P_DEFAULT), "/skipped"));
      m.skipped = skipped_from(h5::read_table(skipped, "/skipped"));
    }
  } catch (const RuntimeFailure& e) {
    throw InputError(fmt::format("{}: damaged bundle: {}", p, e.what()));
  }
  for (std::size_t i = 0; i < m.index.size(); ++i) m.position[m.index[i].record_id] = i;
}

BundleReader::~BundleReader() {
  if (!impl_) return;
  std::lock_guard guard(h5::lock());
  impl_.reset();
}
BundleReader::BundleReader(BundleReader&&) noexcept = default;
BundleReader& BundleReader::operator=(BundleReader&&) noexcept = default;

const fs::path& BundleReader::path() const { return impl_->path; }
const BundleAttributes& BundleReader::attributes() const { return impl_->attributes; }
const std::vector<IndexRow>& BundleReader::index() const { return impl_->index; }
const std::vector<SkippedRecord>& BundleReader::skipped() const { return impl_->skipped; }
bool BundleReader::has_record(const std::string& id) const { return impl_->row(id) != nullptr; }

std::vector<std::string> BundleReader::record_ids() const {
  std::vector<std::string> ids;
  for (const IndexRow& r : impl_->index) ids.push_back(r.record_id);
  return ids;
}

namespace {

// The open record group, or InputError naming the file and id.
h5::Id open_record(const BundleReader::Impl& m, const std::string& id) {
  if (!m.row(id)) throw InputError(fmt::format("{}: no record '{}'", m.path.string(), id));
  return h5::open_group(m.file, record_path(id), fmt::format("{}: {}", m.path.string(), record_path(id)));
}

std::string what(const BundleReader::Impl& m, const std::string& id, const std::string& dataset) {
  return fmt::format("{}: record {}: dataset {}/{}", m.path.string(), id, record_path(id), dataset);
}

h5::Id open_dataset(const BundleReader::Impl& m, hid_t group, const std::string& id, const std::string& name) {
  return h5::Id(h5::check(H5Dopen2(group, name.c_str(), H5P_DEFAULT), what(m, id, name)));
}

// The shape of a signal dataset, refused when the file cannot hold it: a damaged file may claim
// any shape, and allocating it first would exhaust memory. Deflate expands at most 1032:1
// (zlib's documented limit), shuffle and Fletcher32 not at all, so a dataset needs at least
// 1/1032 of its bytes in storage (plus a chunk's worth of slack for small datasets).
std::vector<std::uint64_t> stored_shape(const BundleReader::Impl& m, hid_t ds, const std::string& id,
                                        const std::string& name) {
  constexpr double kMostInflation = 1032, kSlackBytes = 1 << 16;
  std::vector<std::uint64_t> dims = h5::shape(ds);
  h5::Id type(h5::check(H5Dget_type(ds), what(m, id, name)));
  double bytes = static_cast<double>(std::max<std::size_t>(H5Tget_size(type), 1));
  for (std::uint64_t d : dims) bytes *= static_cast<double>(d);
  const double stored = static_cast<double>(H5Dget_storage_size(ds));
  if (bytes > kMostInflation * stored + kSlackBytes)
    throw InputError(fmt::format("{}: its shape [{}] needs {:.0f} bytes but the file holds {:.0f} for it; the bundle "
                                 "is damaged", what(m, id, name), fmt::join(dims, ", "), bytes, stored));
  return dims;
}

Table read_record_table(const BundleReader::Impl& m, const std::string& id, const std::string& name) {
  h5::Id g = open_record(m, id);
  if (!h5::exists(g, name)) return {};
  h5::Id ds = open_dataset(m, g, id, name);
  return h5::read_table(ds, what(m, id, name));
}

}  // namespace

RecordParts BundleReader::parts(const std::string& id) const {
  std::lock_guard guard(h5::lock());
  h5::Id g = open_record(*impl_, id);
  RecordParts p;
  p.pcg_clean = h5::exists(g, "pcg_clean");
  p.states = h5::exists(g, "states");
  p.events = h5::exists(g, "events");
  p.beats = h5::exists(g, "beats");
  p.hemodynamics = h5::exists(g, "hemodynamics");
  p.artifacts = h5::exists(g, "artifacts");
  return p;
}

StoredPcg BundleReader::read_pcg_stored(const std::string& id, bool clean) const {
  std::lock_guard guard(h5::lock());
  const Impl& m = *impl_;
  const std::string name = clean ? "pcg_clean" : "pcg";
  h5::Id g = open_record(m, id);
  h5::Id ds = open_dataset(m, g, id, name);
  auto dims = stored_shape(m, ds, id, name);
  if (dims.size() != 2) throw InputError(what(m, id, name) + ": expected [site, sample]");
  StoredPcg out;
  out.samples = SiteArray<float>(dims[0], dims[1]);
  h5::Id type(h5::check(H5Dget_type(ds), what(m, id, name)));
  if (H5Tget_class(type) == H5T_FLOAT) {
    h5::read_all(ds, H5T_NATIVE_FLOAT, out.samples.data.data(), what(m, id, name));
    return out;
  }
  out.format = H5Tget_size(type) == 2 ? SampleFormat::int16 : SampleFormat::int24;
  out.scale = h5::attr_f64(ds, "scale");
  out.integers = SiteArray<std::int32_t>(dims[0], dims[1]);
  h5::read_all(ds, H5T_NATIVE_INT32, out.integers.data.data(), what(m, id, name));
  for (std::size_t i = 0; i < out.integers.data.size(); ++i)
    out.samples.data[i] = static_cast<float>(out.integers.data[i] * out.scale);
  return out;
}

SiteArray<float> BundleReader::read_pcg(const std::string& id) const { return read_pcg_stored(id).samples; }

SiteArray<std::uint8_t> BundleReader::read_states(const std::string& id) const {
  std::lock_guard guard(h5::lock());
  const Impl& m = *impl_;
  h5::Id g = open_record(m, id);
  if (!h5::exists(g, "states")) return {};
  h5::Id ds = open_dataset(m, g, id, "states");
  auto dims = stored_shape(m, ds, id, "states");
  if (dims.size() != 2) throw InputError(what(m, id, "states") + ": expected [site, sample]");
  SiteArray<std::uint8_t> out(dims.at(0), dims.at(1));
  h5::read_all(ds, H5T_NATIVE_UINT8, out.data.data(), what(m, id, "states"));
  return out;
}

std::vector<Event> BundleReader::read_events(const std::string& id) const {
  std::lock_guard guard(h5::lock());
  try {
    return events_from(read_record_table(*impl_, id, "events"));
  } catch (const std::runtime_error& e) {
    if (dynamic_cast<const InputError*>(&e)) throw;
    throw RuntimeFailure(what(*impl_, id, "events") + ": " + e.what());
  }
}

std::vector<BeatRow> BundleReader::read_beats(const std::string& id) const {
  std::lock_guard guard(h5::lock());
  return beats_from(read_record_table(*impl_, id, "beats"));
}

std::vector<Artifact> BundleReader::read_artifacts(const std::string& id) const {
  std::lock_guard guard(h5::lock());
  return artifacts_from(read_record_table(*impl_, id, "artifacts"));
}

HemodynamicTraces BundleReader::read_hemodynamics(const std::string& id) const {
  std::lock_guard guard(h5::lock());
  const Impl& m = *impl_;
  h5::Id g = open_record(m, id);
  HemodynamicTraces h;
  if (!h5::exists(g, "hemodynamics")) return h;
  h5::Id hg = h5::open_group(g, "hemodynamics", what(m, id, "hemodynamics"));
  h.sample_rate_hz = h5::attr_f64(hg, "sample_rate_hz");
  h.names = h5::attr_strings(hg, "channels");
  for (std::size_t c = 0; c < h.names.size(); ++c) {
    const std::string name = "hemodynamics/" + h.names[c];
    h5::Id ds = open_dataset(m, g, id, name);
    const auto shape = stored_shape(m, ds, id, name);
    if (shape.size() != 1) throw InputError(what(m, id, name) + ": expected [sample]");
    const auto n = shape[0];
    if (c == 0) h.data = SiteArray<float>(h.names.size(), n);
    if (n != h.data.n_samples) throw InputError(what(m, id, name) + ": channel lengths differ");
    h5::read_all(ds, H5T_NATIVE_FLOAT, h.data.row(c), what(m, id, name));
    h.units.push_back(h5::attr_string(ds, "unit"));
  }
  return h;
}

std::vector<Site> BundleReader::sites(const std::string& id) const {
  std::lock_guard guard(h5::lock());
  h5::Id g = open_record(*impl_, id);
  std::vector<Site> out;
  for (const std::string& s : h5::attr_strings(g, "sites")) {
    auto site = parse_site(s);
    if (!site) throw InputError(fmt::format("{}: record {}: unknown site '{}'", impl_->path.string(), id, s));
    out.push_back(*site);
  }
  return out;
}

int BundleReader::sample_rate_hz(const std::string& id) const {
  std::lock_guard guard(h5::lock());
  h5::Id g = open_record(*impl_, id);
  return static_cast<int>(h5::attr_int(g, "sample_rate_hz"));
}

Record BundleReader::read_record(const std::string& id) const {
  std::lock_guard guard(h5::lock());
  const Impl& m = *impl_;
  const IndexRow* row = m.row(id);
  if (!row) throw InputError(fmt::format("{}: no record '{}'", m.path.string(), id));
  Record r;
  SubjectSpec& s = r.subject;
  s.dataset_seed = m.attributes.seed;
  s.record_index = row->record_index;
  s.record_id = row->record_id;
  s.population = row->population;
  if (auto st = parse_state(row->state)) s.state = *st;
  s.exercise_intensity = row->exercise_intensity;
  s.severity = row->severity;
  s.sample_rate_hz = row->sample_rate_hz;
  if (auto sensor = parse_sensor(row->sensor)) s.sensor = *sensor;
  s.sample_format = m.attributes.sample_format;
  s.params.duration_s = row->duration_s;
  if (std::isfinite(row->snr_db)) s.params.snr_db = row->snr_db;
  s.noise_profile_name = row->noise_profile;
  r.sample_rate_hz = row->sample_rate_hz;
  r.sites = sites(id);
  s.sites = r.sites;
  r.summary.heart_rate_bpm = row->heart_rate_bpm;
  r.summary.cardiac_output_l_min = row->cardiac_output_l_min;
  r.summary.lv_ejection_fraction = row->lv_ejection_fraction;
  r.summary.rv_ejection_fraction = row->rv_ejection_fraction;
  r.summary.snr_target_db = row->snr_db;
  r.summary.snr_achieved_db = row->snr_achieved_db;
  {
    h5::Id g = open_record(m, id);
    if (h5::has_attr(g, "stationary_noise")) r.summary.stationary_noise = h5::attr_strings(g, "stationary_noise");
  }
  RecordParts p = parts(id);
  r.pcg = read_pcg(id);
  if (p.pcg_clean) r.pcg_clean = read_pcg_stored(id, true).samples;
  r.states = read_states(id);
  r.events = read_events(id);
  r.beats = read_beats(id);
  r.artifacts = read_artifacts(id);
  r.hemodynamics = read_hemodynamics(id);
  return r;
}

std::optional<StringTable> BundleReader::read_string_table(const std::string& path) const {
  std::lock_guard guard(h5::lock());
  const Impl& m = *impl_;
  if (!h5::exists(m.file, path)) return std::nullopt;
  h5::Id ds(h5::check(H5Dopen2(m.file, path.c_str(), H5P_DEFAULT), m.path.string() + ": " + path));
  return string_table_from(h5::read_table(ds, m.path.string() + ": " + path));
}

std::vector<std::string> BundleReader::list_group(const std::string& path) const {
  std::lock_guard guard(h5::lock());
  const Impl& m = *impl_;
  std::vector<std::string> names;
  if (path != "/" && !h5::exists(m.file, path)) return names;
  h5::Id g = h5::open_group(m.file, path, m.path.string() + ": " + path);
  hsize_t idx = 0;
  H5Literate(g, H5_INDEX_NAME, H5_ITER_INC, &idx, collect_link, &names);
  return names;
}

std::optional<DatasetInfo> BundleReader::dataset_info(const std::string& path) const {
  std::lock_guard guard(h5::lock());
  const Impl& m = *impl_;
  if (!h5::exists(m.file, path)) return std::nullopt;
  h5::Id ds(H5Dopen2(m.file, path.c_str(), H5P_DEFAULT));
  if (!ds.valid()) {
    H5Eclear2(H5E_DEFAULT);
    return std::nullopt;
  }
  DatasetInfo info;
  info.path = path;
  h5::Id type(h5::check(H5Dget_type(ds), path));
  info.dtype = dtype_name(type);
  if (H5Tget_class(type) == H5T_COMPOUND) {
    int n = H5Tget_nmembers(type);
    for (int i = 0; i < n; ++i) {
      char* name = H5Tget_member_name(type, static_cast<unsigned>(i));
      info.fields.emplace_back(name ? name : "");
      H5free_memory(name);
    }
  }
  info.shape = h5::shape(ds);
  info.attributes = h5::attr_names(ds);
  h5::Id dcpl(h5::check(H5Dget_create_plist(ds), path));
  int filters = H5Pget_nfilters(dcpl);
  for (int i = 0; i < filters; ++i) {
    unsigned flags = 0, config = 0;
    std::size_t nvalues = 0;
    H5Z_filter_t id = H5Pget_filter2(dcpl, static_cast<unsigned>(i), &flags, &nvalues, nullptr, 0, nullptr, &config);
    if (id == H5Z_FILTER_FLETCHER32) info.fletcher32 = true;
    if (id == H5Z_FILTER_DEFLATE) info.gzip = true;
  }
  return info;
}

void BundleReader::check_record_data(const std::string& id) const {
  std::lock_guard guard(h5::lock());
  const Impl& m = *impl_;
  h5::Id g = open_record(m, id);
  std::vector<std::string> names = list_group(record_path(id));
  for (std::size_t i = 0; i < names.size(); ++i) {
    const std::string full = record_path(id) + "/" + names[i];
    if (dataset_info(full)) {
      h5::Id ds = open_dataset(m, g, id, names[i]);
      const std::vector<std::uint64_t> shape = stored_shape(m, ds, id, names[i]);
      h5::Id type(h5::check(H5Dget_type(ds), what(m, id, names[i])));
      std::uint64_t n = 1;
      for (auto d : shape) n *= d;
      std::vector<unsigned char> buf(n * H5Tget_size(type) + 1);
      h5::read_all(ds, type, buf.data(), what(m, id, names[i]));
    } else {
      for (const std::string& child : list_group(full)) names.push_back(names[i] + "/" + child);
    }
  }
}

}  // namespace stethogen::bundle
