#include "bundle/record_compare.hpp"

#include <cstring>
#include <type_traits>

#include <fmt/format.h>

namespace stethogen::bundle {
namespace {

template <typename T>
bool same_bits(const T& a, const T& b) {
  if constexpr (std::is_floating_point_v<T>) return std::memcmp(&a, &b, sizeof(T)) == 0;
  else return a == b;
}

template <typename T>
std::string show(const T& v) {
  if constexpr (std::is_same_v<T, std::uint8_t>) return fmt::format("{}", static_cast<int>(v));
  else return fmt::format("{}", v);
}

template <typename T>
void compare_array(const std::string& dataset, const std::vector<Site>& sites, const SiteArray<T>& a,
                   const SiteArray<T>& b, std::vector<RecordDifference>& out) {
  if (a.n_sites != b.n_sites || a.n_samples != b.n_samples) {
    out.push_back({dataset, fmt::format("shape [{}, {}] stored, [{}, {}] regenerated", a.n_sites, a.n_samples,
                                        b.n_sites, b.n_samples)});
    return;
  }
  std::size_t differing = 0, first = 0;
  for (std::size_t k = 0; k < a.data.size(); ++k)
    if (!same_bits(a.data[k], b.data[k])) {
      if (differing == 0) first = k;
      ++differing;
    }
  if (differing == 0) return;
  const std::size_t site = a.n_samples ? first / a.n_samples : 0, sample = a.n_samples ? first % a.n_samples : 0;
  const std::string site_name = site < sites.size() ? std::string(name(sites[site])) : fmt::format("#{}", site);
  out.push_back({dataset, fmt::format("{} of {} values differ; first at site {}, sample {}: stored {}, regenerated {}",
                                      differing, a.data.size(), site_name, sample, show(a.data[first]),
                                      show(b.data[first]))});
}

// Compares two tables row by row with a per-row field comparison returning the differing field.
template <typename Row, typename FieldDiff>
void compare_table(const std::string& dataset, const std::vector<Row>& a, const std::vector<Row>& b,
                   FieldDiff field_diff, std::vector<RecordDifference>& out) {
  if (a.size() != b.size()) {
    out.push_back({dataset, fmt::format("{} rows stored, {} regenerated", a.size(), b.size())});
    return;
  }
  for (std::size_t i = 0; i < a.size(); ++i) {
    std::string field = field_diff(a[i], b[i]);
    if (!field.empty()) {
      out.push_back({dataset, fmt::format("row {} differs in {}", i, field)});
      return;
    }
  }
}

// Returns "name (stored x, regenerated y)" for the first differing field of a list.
#define STETHOGEN_FIELD(field)                                                                         \
  if (!same_bits(a.field, b.field))                                                                    \
    return fmt::format("{} (stored {}, regenerated {})", #field, show(a.field), show(b.field));

std::string event_diff(const Event& a, const Event& b) {
  STETHOGEN_FIELD(beat)
  if (a.kind != b.kind) return fmt::format("kind (stored {}, regenerated {})", name(a.kind), name(b.kind));
  STETHOGEN_FIELD(site)
  STETHOGEN_FIELD(onset_s)
  STETHOGEN_FIELD(peak_s)
  STETHOGEN_FIELD(offset_s)
  STETHOGEN_FIELD(onset_index)
  STETHOGEN_FIELD(peak_index)
  STETHOGEN_FIELD(offset_index)
  return {};
}

std::string beat_diff(const BeatRow& a, const BeatRow& b) {
  STETHOGEN_FIELD(beat)
  STETHOGEN_FIELD(activation_s)
  STETHOGEN_FIELD(rr_s)
  STETHOGEN_FIELD(resp_phase)
  STETHOGEN_FIELD(inspiration)
  STETHOGEN_FIELD(lv_stroke_volume_ml)
  STETHOGEN_FIELD(rv_stroke_volume_ml)
  STETHOGEN_FIELD(lv_ejection_fraction)
  STETHOGEN_FIELD(rv_ejection_fraction)
  STETHOGEN_FIELD(lv_dpdt_max_mmhg_s)
  STETHOGEN_FIELD(aortic_systolic_mmhg)
  STETHOGEN_FIELD(aortic_diastolic_mmhg)
  STETHOGEN_FIELD(a2p2_split_ms)
  STETHOGEN_FIELD(s1_amplitude)
  STETHOGEN_FIELD(s2_amplitude)
  return {};
}

std::string artifact_diff(const Artifact& a, const Artifact& b) {
  STETHOGEN_FIELD(kind)
  STETHOGEN_FIELD(site)
  STETHOGEN_FIELD(onset_s)
  STETHOGEN_FIELD(offset_s)
  STETHOGEN_FIELD(level_db)
  return {};
}

std::string index_diff(const IndexRow& a, const IndexRow& b) {
  STETHOGEN_FIELD(record_id)
  STETHOGEN_FIELD(record_index)
  STETHOGEN_FIELD(population)
  STETHOGEN_FIELD(state)
  STETHOGEN_FIELD(exercise_intensity)
  STETHOGEN_FIELD(severity)
  STETHOGEN_FIELD(heart_rate_bpm)
  STETHOGEN_FIELD(cardiac_output_l_min)
  STETHOGEN_FIELD(lv_ejection_fraction)
  STETHOGEN_FIELD(rv_ejection_fraction)
  STETHOGEN_FIELD(snr_db)
  STETHOGEN_FIELD(snr_achieved_db)
  STETHOGEN_FIELD(duration_s)
  STETHOGEN_FIELD(sample_rate_hz)
  STETHOGEN_FIELD(n_samples)
  STETHOGEN_FIELD(n_sites)
  STETHOGEN_FIELD(n_beats)
  STETHOGEN_FIELD(sensor)
  STETHOGEN_FIELD(noise_profile)
  return {};
}

#undef STETHOGEN_FIELD

}  // namespace

std::vector<RecordDifference> compare_records(const std::string& record_id, const Record& a, const Record& b,
                                              const RecordParts& parts) {
  std::vector<RecordDifference> out;
  const std::string group = "/records/" + record_id + "/";
  if (a.sample_rate_hz != b.sample_rate_hz)
    out.push_back({group + "pcg", fmt::format("sample_rate_hz {} stored, {} regenerated", a.sample_rate_hz, b.sample_rate_hz)});
  if (a.sites != b.sites) out.push_back({group + "pcg", "the site lists differ"});
  compare_array(group + "pcg", a.sites, a.pcg, b.pcg, out);
  if (parts.pcg_clean) compare_array(group + "pcg_clean", a.sites, a.pcg_clean, b.pcg_clean, out);
  if (parts.states) compare_array(group + "states", a.sites, a.states, b.states, out);
  if (parts.events) compare_table(group + "events", a.events, b.events, event_diff, out);
  if (parts.beats) compare_table(group + "beats", a.beats, b.beats, beat_diff, out);
  if (parts.artifacts) compare_table(group + "artifacts", a.artifacts, b.artifacts, artifact_diff, out);
  if (parts.hemodynamics) {
    const HemodynamicTraces &ha = a.hemodynamics, &hb = b.hemodynamics;
    if (!same_bits(ha.sample_rate_hz, hb.sample_rate_hz) || ha.names != hb.names || ha.units != hb.units)
      out.push_back({group + "hemodynamics", "rate, channel names or units differ"});
    compare_array(group + "hemodynamics", {}, ha.data, hb.data, out);
  }
  return out;
}

std::vector<RecordDifference> compare_index_rows(const IndexRow& a, const IndexRow& b) {
  std::string field = index_diff(a, b);
  if (field.empty()) return {};
  return {{"/index", fmt::format("row of {} differs in {}", a.record_id, field)}};
}

}  // namespace stethogen::bundle
