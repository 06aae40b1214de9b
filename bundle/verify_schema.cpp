// The schema check of `verify` (bundle/verify.hpp): the file's groups, datasets, dtypes,
// shapes, compound fields, attributes and filters against the format reference
// (docs/bundle-format.md, format version 1). Written out here rather than taken from the
// writer's own tables, so a writer that drifts from the documented format is caught.
#include <algorithm>
#include <map>
#include <set>

#include <fmt/format.h>

#include "bundle/verify.hpp"

namespace stethogen::bundle {
namespace {

using Names = std::vector<std::string>;

const Names kRootAttributes = {"format", "format_version", "generator_version", "recipe_toml", "recipe_sha256",
                               "seed", "record_count", "sample_format", "content", "created_utc"};
const Names kIndexFields = {"record_id", "record_index", "population", "state", "exercise_intensity", "severity",
                            "heart_rate_bpm", "cardiac_output_l_min", "lv_ejection_fraction", "rv_ejection_fraction",
                            "snr_db", "snr_achieved_db", "duration_s", "sample_rate_hz", "n_samples", "n_sites",
                            "n_beats", "sensor", "noise_profile"};
const Names kSkippedFields = {"record_id", "record_index", "reason"};
const Names kRecordAttributes = {"record_index", "population", "state", "exercise_intensity", "severity", "sensor",
                                 "sample_rate_hz", "sites", "duration_s", "snr_db", "snr_achieved_db", "noise_profile",
                                 "stationary_noise"};
const Names kPcgAttributes = {"sample_rate_hz", "sites", "unit", "sample_format", "scale"};
const Names kStatesAttributes = {"labels", "sample_rate_hz", "sites"};
const Names kEventFields = {"beat", "kind", "site", "onset_s", "peak_s", "offset_s",
                            "onset_index", "peak_index", "offset_index"};
const Names kBeatFields = {"beat", "activation_s", "rr_s", "resp_phase", "inspiration", "lv_stroke_volume_ml",
                           "rv_stroke_volume_ml", "lv_ejection_fraction", "rv_ejection_fraction",
                           "lv_dpdt_max_mmhg_s", "aortic_systolic_mmhg", "aortic_diastolic_mmhg", "a2p2_split_ms",
                           "s1_amplitude", "s2_amplitude"};
const Names kArtifactFields = {"kind", "site", "onset_s", "offset_s", "onset_index", "offset_index", "level_db"};
const Names kHemodynamicsAttributes = {"sample_rate_hz", "channels"};
const Names kChannelAttributes = {"unit", "sample_rate_hz"};

std::string joined(const Names& names) {
  std::string out;
  for (const auto& n : names) out += (out.empty() ? "" : ", ") + n;
  return out;
}

// Collects findings for one bundle.
struct SchemaChecker {
  const BundleReader& reader;
  VerifyReport& report;

  void problem(const std::string& record, const std::string& message) {
    report.findings.push_back({FindingKind::schema, record, message});
  }

  void attributes(const std::string& record, const std::string& path, const Names& required) {
    const Names present = reader.attribute_names(path);
    for (const std::string& a : required) {
      report.schema_objects += 1;
      if (std::find(present.begin(), present.end(), a) == present.end())
        problem(record, fmt::format("{}: attribute '{}' is missing", path, a));
    }
  }

  // A dataset of the given dtype and rank; returns its info when it exists.
  std::optional<DatasetInfo> dataset(const std::string& record, const std::string& path, const std::string& dtype,
                                     std::size_t rank, const Names& attrs) {
    report.schema_objects += 1;
    std::optional<DatasetInfo> info = reader.dataset_info(path);
    if (!info) {
      problem(record, fmt::format("{}: dataset is missing", path));
      return std::nullopt;
    }
    if (info->dtype != dtype) problem(record, fmt::format("{}: dtype {}, documented {}", path, info->dtype, dtype));
    if (info->shape.size() != rank)
      problem(record, fmt::format("{}: rank {}, documented {}", path, info->shape.size(), rank));
    std::uint64_t elements = 1;
    for (auto d : info->shape) elements *= d;
    if (elements > 0 && !info->fletcher32) problem(record, fmt::format("{}: no Fletcher32 checksum filter", path));
    attributes(record, path, attrs);
    return info;
  }

  std::optional<DatasetInfo> table(const std::string& record, const std::string& path, const Names& fields,
                                   const Names& attrs = {}) {
    std::optional<DatasetInfo> info = dataset(record, path, "compound", 1, attrs);
    if (info && info->fields != fields)
      problem(record, fmt::format("{}: fields [{}], documented [{}]", path, joined(info->fields), joined(fields)));
    return info;
  }

  void array(const std::string& record, const std::string& path, const std::string& dtype, const Names& attrs,
             const IndexRow& row) {
    std::optional<DatasetInfo> info = dataset(record, path, dtype, 2, attrs);
    if (!info || info->shape.size() != 2) return;
    const std::vector<std::uint64_t> want = {static_cast<std::uint64_t>(row.n_sites),
                                             static_cast<std::uint64_t>(row.n_samples)};
    if (info->shape != want)
      problem(record, fmt::format("{}: shape [{}, {}], the index says [{}, {}]", path, info->shape[0], info->shape[1],
                                  want[0], want[1]));
  }

  void record(const IndexRow& row, const std::string& pcg_dtype) {
    const std::string& id = row.record_id;
    const std::string g = "/records/" + id;
    attributes(id, g, kRecordAttributes);
    const Names members = reader.list_group(g);
    const std::set<std::string> present(members.begin(), members.end());
    const RecordParts parts = reader.parts(id);
    Names pcg_attrs = kPcgAttributes;
    if (pcg_dtype != "float32") pcg_attrs.push_back("valid_range");
    array(id, g + "/pcg", pcg_dtype, pcg_attrs, row);
    if (parts.pcg_clean) array(id, g + "/pcg_clean", pcg_dtype, pcg_attrs, row);
    if (parts.states) array(id, g + "/states", "uint8", kStatesAttributes, row);
    if (parts.events) table(id, g + "/events", kEventFields);
    if (parts.beats) {
      auto info = table(id, g + "/beats", kBeatFields);
      if (info && info->shape.size() == 1 && info->shape[0] != static_cast<std::uint64_t>(row.n_beats))
        problem(id, fmt::format("{}/beats: {} rows, the index says n_beats = {}", g, info->shape[0], row.n_beats));
    }
    if (parts.artifacts) table(id, g + "/artifacts", kArtifactFields, {"sample_rate_hz"});
    if (present.count("hemodynamics")) {
      attributes(id, g + "/hemodynamics", kHemodynamicsAttributes);
      for (const std::string& channel : reader.list_group(g + "/hemodynamics"))
        dataset(id, g + "/hemodynamics/" + channel, "float32", 1, kChannelAttributes);
    }
    const std::set<std::string> documented = {"pcg", "pcg_clean", "states", "events", "beats", "artifacts",
                                              "hemodynamics"};
    for (const std::string& m : members)
      if (!documented.count(m)) problem(id, fmt::format("{}/{}: not part of the documented format", g, m));
  }

  void run() {
    attributes("", "/", kRootAttributes);
    const BundleAttributes& a = reader.attributes();
    const std::string pcg_dtype = a.sample_format == SampleFormat::float32 ? "float32"
                                  : a.sample_format == SampleFormat::int16 ? "int16"
                                                                           : "int32";
    const std::vector<IndexRow>& index = reader.index();
    if (auto info = table("", "/index", kIndexFields); info && info->shape.size() == 1 && info->shape[0] != index.size())
      problem("", fmt::format("/index: {} rows, read {}", info->shape[0], index.size()));
    if (reader.dataset_info("/skipped")) table("", "/skipped", kSkippedFields);

    report.schema_objects += 1;
    const Names groups = reader.list_group("/records");
    std::set<std::string> listed(groups.begin(), groups.end());
    for (const IndexRow& row : index) {
      if (!listed.erase(row.record_id)) {
        problem(row.record_id, fmt::format("/records/{}: listed in /index but missing", row.record_id));
        continue;
      }
      record(row, pcg_dtype);
    }
    for (const std::string& orphan : listed)
      problem(orphan, fmt::format("/records/{}: not listed in /index", orphan));
  }
};

}  // namespace

void verify_schema(const BundleReader& reader, VerifyReport& report) { SchemaChecker{reader, report}.run(); }

}  // namespace stethogen::bundle
