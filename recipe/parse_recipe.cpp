// Top level of the recipe: the document, [dataset] and [noise.<name>]; loading and hashing.
#include <cerrno>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <sstream>

#include <fmt/format.h>
#include <openssl/evp.h>

#include "core/suggest.hpp"
#include "noise/profile.hpp"
#include "recipe/sections.hpp"

namespace stethogen::recipe {
namespace detail {
namespace {

template <typename Enum, std::size_t N>
std::vector<std::string> names_of(const std::array<Enum, N>& all) {
  std::vector<std::string> out;
  for (Enum v : all) out.emplace_back(name(v));
  return out;
}

std::string join(const std::vector<std::string>& names) {
  std::string out;
  for (const std::string& n : names) out += (out.empty() ? "" : ", ") + n;
  return out;
}

// A string naming one of `allowed`; parse maps it to the enum value.
template <typename Parse>
auto enum_value(const Fields& f, const toml::node& node, const std::string& path,
                const std::vector<std::string>& allowed, Parse parse) {
  std::string s = f.string(node, path);
  auto v = parse(s);
  if (!v)
    f.fail(node, fmt::format("{} = \"{}\": must be one of {}{}", path, s, join(allowed),
                             did_you_mean(s, allowed)));
  return *v;
}

std::vector<Site> parse_sites(const Fields& f, const toml::node& node) {
  const std::string path = "dataset.sites";
  const toml::array& arr = f.array(node, path);
  if (arr.empty()) f.fail(node, path + ": must list at least one of " + allowed_sites());
  std::vector<Site> sites;
  for (std::size_t i = 0; i < arr.size(); ++i) {
    std::string p = fmt::format("{}[{}]", path, i);
    Site s = enum_value(f, arr[i], p, names_of(kAllSites), parse_site);
    for (Site seen : sites)
      if (seen == s) f.fail(arr[i], fmt::format("{} = \"{}\": listed twice", p, name(s)));
    sites.push_back(s);
  }
  return sites;
}

}  // namespace

DatasetSpec parse_dataset(const Fields& f, const toml::table& doc) {
  const toml::node* node = doc.get("dataset");
  if (!node) throw InputError(f.file() + ": missing [dataset] table (it needs at least name)");
  const toml::table& t = f.table(*node, "dataset");
  f.reject_unknown_keys(t, "dataset",
                        {"name", "seed", "sample_rate_hz", "duration_s", "sites", "sensor",
                         "sample_format", "compression", "output", "on_record_error"});
  DatasetSpec d;
  const toml::node* name_node = t.get("name");
  if (!name_node) f.fail(t, "dataset.name: missing (the dataset needs a name)");
  d.name = f.identifier(*name_node, "dataset.name");
  if (auto n = t.get("seed"))
    d.seed = static_cast<std::uint64_t>(f.integer(*n, "dataset.seed", 0, INT64_MAX));
  if (auto n = t.get("sample_rate_hz"))
    d.sample_rate_hz = static_cast<int>(f.integer(*n, "dataset.sample_rate_hz", 1000, 48000));
  if (auto n = t.get("duration_s")) {
    const ParamInfo& i = info(Param::duration_s);
    d.duration_s = f.distribution(*n, "dataset.duration_s", i.lo, i.hi);
  }
  if (auto n = t.get("sites")) d.sites = parse_sites(f, *n);
  if (auto n = t.get("sensor"))
    d.sensor = enum_value(f, *n, "dataset.sensor", names_of(kAllSensors), parse_sensor);
  if (auto n = t.get("sample_format"))
    d.sample_format = enum_value(f, *n, "dataset.sample_format", names_of(kAllSampleFormats),
                                 parse_sample_format);
  if (auto n = t.get("compression"))
    d.compression = enum_value(f, *n, "dataset.compression", names_of(kAllCompressions), parse_compression);
  d.output = d.name + ".h5";
  if (auto n = t.get("output")) {
    d.output = f.string(*n, "dataset.output");
    if (d.output.empty()) f.fail(*n, "dataset.output = \"\": must be a file path");
  }
  if (auto n = t.get("on_record_error"))
    d.on_record_error =
        enum_value(f, *n, "dataset.on_record_error", {"stop", "skip"}, parse_failure_policy);
  return d;
}

ProfileMap parse_noise_profiles(const Fields& f, const toml::table& doc, int sample_rate_hz) {
  ProfileMap profiles;
  const toml::node* node = doc.get("noise");
  if (!node) return profiles;
  const toml::table& t = f.table(*node, "noise");
  for (auto&& [key, value] : t) {
    std::string name(key.str());
    std::string path = "noise." + name;
    if (!value.is_table())
      f.fail(value, fmt::format("{} = {}: must be a table [noise.<profile name>]", path,
                                describe(value)));
    f.identifier(name, key.source(), path + " (profile name)");
    auto profile = std::make_shared<noise::NoiseProfile>(
        noise::parse_noise_profile(*value.as_table(), path, f.file()));
    try {
      noise::validate_for_rate(*profile, sample_rate_hz, path);
    } catch (const InputError& e) {
      // The message names "<path>.<process>.<key>": point at that process's table if present.
      std::string_view rest = std::string_view(e.what()).substr(0, std::string_view(e.what()).find(' '));
      const toml::node* at = &value;
      if (rest.size() > path.size() + 1 && rest.substr(0, path.size() + 1) == path + ".") {
        rest.remove_prefix(path.size() + 1);
        if (auto n = value.as_table()->get(rest.substr(0, rest.find('.')))) at = n;
      }
      f.fail(*at, e.what());
    }
    profiles.emplace(name, std::move(profile));
  }
  return profiles;
}

}  // namespace detail

namespace {

std::string sha256_hex(std::string_view text) {
  unsigned char digest[EVP_MAX_MD_SIZE];
  unsigned int length = 0;
  if (EVP_Digest(text.data(), text.size(), digest, &length, EVP_sha256(), nullptr) != 1)
    throw RuntimeFailure("SHA-256 of the recipe failed (OpenSSL EVP_Digest)");
  std::string hex;
  for (unsigned int i = 0; i < length; ++i) hex += fmt::format("{:02x}", digest[i]);
  return hex;
}

}  // namespace

Recipe parse_recipe(std::string_view text, const std::string& source_name) {
  detail::Fields f(source_name);
  toml::table doc;
  try {
    doc = toml::parse(text, std::string_view(source_name));
  } catch (const toml::parse_error& e) {
    f.fail(e.source(), fmt::format("TOML syntax error: {}", e.description()));
  }
  f.reject_unknown_keys(doc, "", {"dataset", "noise", "population", "sweep"});
  Recipe r;
  r.path = source_name;
  r.text = std::string(text);
  r.sha256_hex = sha256_hex(text);
  r.dataset = detail::parse_dataset(f, doc);
  r.noise_profiles = detail::parse_noise_profiles(f, doc, r.dataset.sample_rate_hz);
  r.populations = detail::parse_populations(f, doc, r.noise_profiles);
  std::uint64_t first = 0;
  for (const PopulationSpec& p : r.populations) {
    r.first_record.push_back(first);
    first += p.count;
  }
  return r;
}

Recipe load_recipe(const std::string& path) {
  constexpr std::uintmax_t kMaxRecipeBytes = 16u << 20;
  std::error_code ec;
  if (!std::filesystem::is_regular_file(path, ec))
    throw InputError(fmt::format("{}: cannot read recipe: {}", path,
                                 std::filesystem::exists(path, ec) ? "not a regular file"
                                                                   : "no such file"));
  if (std::filesystem::file_size(path, ec) > kMaxRecipeBytes)
    throw InputError(fmt::format("{}: recipe is larger than 16 MiB", path));
  std::ifstream in(path, std::ios::binary);
  if (!in.is_open())
    throw InputError(fmt::format("{}: cannot read recipe: {}", path, std::strerror(errno)));
  std::ostringstream text;
  text << in.rdbuf();
  if (in.bad()) throw InputError(fmt::format("{}: cannot read recipe: read error", path));
  return parse_recipe(text.str(), path);
}

}  // namespace stethogen::recipe
