#include "bundle/staged_record.hpp"

#include <stdexcept>
#include <utility>

#include "bundle/schema.hpp"
#include "bundle/writer.hpp"

namespace stethogen::bundle {

namespace {

using Kind = StagedAttribute::Kind;

StagedAttribute text(std::string name, std::string value) { return {std::move(name), Kind::str, {std::move(value)}, {}, 0}; }
StagedAttribute texts(std::string name, std::vector<std::string> values) {
  return {std::move(name), Kind::strs, std::move(values), {}, 0};
}
StagedAttribute i32(std::string name, std::int32_t v) { return {std::move(name), Kind::i32, {}, {v}, 0}; }
StagedAttribute u64(std::string name, std::uint64_t v) {
  return {std::move(name), Kind::u64, {}, {static_cast<std::int64_t>(v)}, 0};
}
StagedAttribute f64(std::string name, double v) { return {std::move(name), Kind::f64, {}, {}, v}; }
StagedAttribute i32s(std::string name, std::vector<std::int32_t> v) {
  return {std::move(name), Kind::i32s, {}, {v.begin(), v.end()}, 0};
}

std::vector<std::string> site_names(const std::vector<Site>& sites) {
  std::vector<std::string> out;
  for (Site s : sites) out.emplace_back(name(s));
  return out;
}

StagedObject dataset(std::string path, EncodedArray data) {
  StagedObject o;
  o.path = std::move(path);
  o.data = std::move(data);
  return o;
}

StagedObject table(std::string path, const Table& t, Compression compression) {
  EncodedTable e = encode_table(t, table_filters(compression));
  StagedObject o = dataset(std::move(path), std::move(e.rows));
  o.members = std::move(e.members);
  o.attributes.push_back(texts("units", std::move(e.units)));
  return o;
}

StagedObject signal(std::string path, EncodedArray data, const Record& r, SampleFormat format) {
  StagedObject o = dataset(std::move(path), std::move(data));
  double scale = 1.0;
  if (format != SampleFormat::float32) {
    const std::int32_t full = format == SampleFormat::int16 ? kInt16FullScale : kInt24FullScale;
    scale = 1.0 / full;
    o.attributes.push_back(i32s("valid_range", {-full, full}));
  }
  o.attributes.push_back(i32("sample_rate_hz", r.sample_rate_hz));
  o.attributes.push_back(texts("sites", site_names(r.sites)));
  o.attributes.push_back(text("unit", "full_scale"));
  o.attributes.push_back(text("sample_format", std::string(name(format))));
  o.attributes.push_back(f64("scale", scale));
  return o;
}

}  // namespace

StagingSettings staging_settings(const BundleAttributes& a) {
  return {a.sample_format, a.compression, a.content == "public"};
}

ChunkFilters table_filters(Compression compression) {
  return filters_for(DatasetRole::table, SampleFormat::float32, compression);
}

StagedRecord stage_record(const Record& r, EncodedRecord e, const RecordParts& parts, const StagingSettings& settings,
                          const std::string& record_id) {
  if (e.format != settings.sample_format || e.compression != settings.compression)
    throw std::logic_error("stage_record: record encoded for another sample format or compression");
  const SubjectSpec& s = r.subject;
  StagedRecord out;
  out.row = index_row(r);
  if (!record_id.empty()) out.row.record_id = record_id;
  const std::string state = settings.public_content ? std::string(kWithheldState) : std::string(name(s.state));
  out.row.state = state;

  auto& a = out.attributes;
  a.push_back(u64("record_index", s.record_index));
  a.push_back(text("population", s.population));
  a.push_back(text("state", state));
  a.push_back(f64("exercise_intensity", s.exercise_intensity));
  a.push_back(f64("severity", s.severity));
  a.push_back(text("sensor", std::string(name(s.sensor))));
  a.push_back(i32("sample_rate_hz", r.sample_rate_hz));
  a.push_back(texts("sites", site_names(r.sites)));
  a.push_back(f64("duration_s", r.sample_rate_hz > 0 ? double(r.pcg.n_samples) / r.sample_rate_hz : 0.0));
  a.push_back(f64("snr_db", r.summary.snr_target_db));
  a.push_back(f64("snr_achieved_db", r.summary.snr_achieved_db));
  a.push_back(text("noise_profile", s.noise_profile_name));
  a.push_back(texts("stationary_noise", r.summary.stationary_noise));

  auto& objects = out.objects;
  const SampleFormat format = settings.sample_format;
  objects.push_back(signal("pcg", std::move(e.pcg), r, format));
  if (parts.pcg_clean && e.has_pcg_clean) objects.push_back(signal("pcg_clean", std::move(e.pcg_clean), r, format));
  if (parts.states && e.has_states) {
    StagedObject o = dataset("states", std::move(e.states));
    o.attributes.push_back(texts("labels", label_names()));
    o.attributes.push_back(i32("sample_rate_hz", r.sample_rate_hz));
    o.attributes.push_back(texts("sites", site_names(r.sites)));
    objects.push_back(std::move(o));
  }
  if (parts.events) objects.push_back(table("events", events_table(r.events), settings.compression));
  if (parts.beats) objects.push_back(table("beats", beats_table(r.beats), settings.compression));
  if (parts.artifacts) {
    StagedObject o = table("artifacts", artifacts_table(r.artifacts, r.sample_rate_hz), settings.compression);
    o.attributes.push_back(i32("sample_rate_hz", r.sample_rate_hz));
    objects.push_back(std::move(o));
  }
  const HemodynamicTraces& h = r.hemodynamics;
  if (parts.hemodynamics && e.has_hemodynamics) {
    StagedObject g;
    g.group = true;
    g.path = "hemodynamics";
    g.attributes.push_back(f64("sample_rate_hz", h.sample_rate_hz));
    g.attributes.push_back(texts("channels", h.names));
    objects.push_back(std::move(g));
    for (std::size_t c = 0; c < e.hemodynamics.size(); ++c) {
      StagedObject o = dataset("hemodynamics/" + h.names[c], std::move(e.hemodynamics[c]));
      o.attributes.push_back(text("unit", c < h.units.size() ? h.units[c] : std::string{}));
      o.attributes.push_back(f64("sample_rate_hz", h.sample_rate_hz));
      objects.push_back(std::move(o));
    }
  }
  return out;
}

}  // namespace stethogen::bundle
