#include "scoring/split.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <limits>
#include <set>

#include <fmt/format.h>
#include <openssl/evp.h>
#include <openssl/hmac.h>

#include "bundle/export_files.hpp"
#include "bundle/reader.hpp"
#include "bundle/writer.hpp"
#include "core/error.hpp"

namespace stethogen::scoring {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

// What a participant may see of a record: its signal, rate, sites, sensor and length.
// Everything that reveals physiology, noise or truth is dropped or set to NaN / empty; the
// writer stores the state as "withheld" in a public bundle, and the list of stationary noise
// processes reads "withheld".
Record blinded(const Record& full, const std::string& public_id, std::uint64_t position) {
  Record r;
  r.subject.record_id = public_id;
  r.subject.record_index = position;
  r.subject.state = State::rest;
  r.subject.sample_rate_hz = full.sample_rate_hz;
  r.subject.sites = full.sites;
  r.subject.sensor = full.subject.sensor;
  r.subject.sample_format = full.subject.sample_format;
  r.subject.params.duration_s = full.subject.params.duration_s;
  r.subject.params.snr_db = std::nullopt;
  r.sample_rate_hz = full.sample_rate_hz;
  r.sites = full.sites;
  r.pcg = full.pcg;
  r.summary.heart_rate_bpm = r.summary.cardiac_output_l_min = kNaN;
  r.summary.lv_ejection_fraction = r.summary.rv_ejection_fraction = kNaN;
  r.summary.snr_target_db = r.summary.snr_achieved_db = kNaN;
  r.summary.stationary_noise = {"withheld"};
  return r;
}

}  // namespace

std::string opaque_id(std::uint64_t seed, const std::string& record_id) {
  std::array<unsigned char, 8> key{};
  for (std::size_t i = 0; i < 8; ++i) key[i] = static_cast<unsigned char>(seed >> (8 * i));
  std::array<unsigned char, EVP_MAX_MD_SIZE> digest{};
  unsigned int length = 0;
  if (!HMAC(EVP_sha256(), key.data(), key.size(), reinterpret_cast<const unsigned char*>(record_id.data()),
            record_id.size(), digest.data(), &length))
    throw RuntimeFailure("HMAC-SHA256 failed while making opaque record ids");
  std::string id = "c";
  for (std::size_t i = 0; i < 8; ++i) id += fmt::format("{:02x}", digest[i]);
  return id;
}

SplitReport split_bundle(const SplitOptions& o) {
  if (std::filesystem::absolute(o.public_path) == std::filesystem::absolute(o.key_path))
    throw InputError(fmt::format("--public and --key both name {}: they must be two files", o.key_path.string()));
  bundle::check_not_overwriting({o.public_path, o.key_path}, o.force);
  bundle::BundleReader reader(o.bundle);
  if (reader.attributes().content != "full")
    throw InputError(fmt::format("{}: content = '{}': only a full bundle (from generate or merge) can be split",
                                 o.bundle.string(), reader.attributes().content));

  // The shuffle: records in the order of their opaque ids.
  std::vector<std::pair<std::string, std::string>> order;  // (public id, record id)
  std::set<std::string> seen;
  for (const std::string& id : reader.record_ids()) {
    std::string public_id = opaque_id(o.seed, id);
    if (!seen.insert(public_id).second)
      throw RuntimeFailure(fmt::format("two records share the opaque id {}; choose another --seed", public_id));
    order.emplace_back(public_id, id);
  }
  std::sort(order.begin(), order.end());

  bundle::BundleAttributes public_attributes;
  public_attributes.content = "public";
  public_attributes.generator_version = reader.attributes().generator_version;
  public_attributes.record_count = order.size();
  public_attributes.sample_format = reader.attributes().sample_format;
  bundle::BundleAttributes key_attributes = reader.attributes();
  key_attributes.content = "key";
  key_attributes.created_utc.clear();
  key_attributes.extra.emplace_back("split_seed", std::to_string(o.seed));
  bundle::WriterOptions overwrite;
  overwrite.overwrite = o.force;
  bundle::BundleWriter public_writer(o.public_path, public_attributes, overwrite);
  bundle::BundleWriter key_writer(o.key_path, key_attributes, overwrite);

  bundle::StringTable map{{"public_id", "record_id"}, {{}, {}}};
  for (std::size_t i = 0; i < order.size(); ++i) {
    const auto& [public_id, id] = order[i];
    Record full = reader.read_record(id);
    public_writer.write_record(blinded(full, public_id, i), bundle::RecordParts::pcg_only());
    key_writer.write_record(full, reader.parts(id), public_id);
    map.columns[0].push_back(public_id);
    map.columns[1].push_back(id);
  }
  key_writer.write_string_table(kIdMapPath, map);
  public_writer.finish();
  key_writer.finish();
  return {order.size()};
}

}  // namespace stethogen::scoring
