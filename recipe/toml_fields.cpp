#include "recipe/toml_fields.hpp"

#include <cmath>

#include <fmt/format.h>

#include "core/check.hpp"
#include "core/suggest.hpp"
#include "core/toml_number.hpp"

namespace stethogen::recipe::detail {
namespace {

std::string join(const std::vector<std::string>& names) {
  std::string out;
  for (const std::string& n : names) out += (out.empty() ? "" : ", ") + n;
  return out;
}

// did_you_mean, plus the common slip of leaving off a unit suffix ("snr" for "snr_db").
std::string suggestion(const std::string& word, const std::vector<std::string>& allowed) {
  std::string hint = did_you_mean(word, allowed);
  if (!hint.empty()) return hint;
  for (const std::string& a : allowed)
    if (a.size() > word.size() + 1 && a.compare(0, word.size(), word) == 0 && a[word.size()] == '_')
      return fmt::format(" (did you mean '{}'?)", a);
  return {};
}

}  // namespace

std::string describe(const toml::node& node) {
  if (auto s = node.as_string()) return fmt::format("\"{}\"", s->get());
  if (auto i = node.as_integer()) return fmt::format("{}", i->get());
  if (auto f = node.as_floating_point()) return fmt::format("{}", f->get());
  if (auto b = node.as_boolean()) return b->get() ? "true" : "false";
  if (node.is_array()) return "an array";
  if (node.is_table()) return "a table";
  return "a date or time";
}

SourceLocation Fields::where(const toml::source_region& region) const {
  return SourceLocation{file_, region.begin.line, region.begin.column};
}

void Fields::fail(const toml::source_region& region, const std::string& message) const {
  SourceLocation loc = where(region);
  throw InputError(loc.str().empty() ? message : loc.str() + ": " + message);
}

void Fields::fail(const toml::node& node, const std::string& message) const {
  fail(node.source(), message);
}

void Fields::reject_unknown_keys(const toml::table& table, const std::string& path,
                                 const std::vector<std::string>& allowed) const {
  for (auto&& [key, value] : table) {
    std::string k(key.str());
    bool known = false;
    for (const std::string& a : allowed) known = known || a == k;
    if (known) continue;
    std::string full = path.empty() ? k : path + "." + k;
    std::string hint = suggestion(k, allowed);
    if (hint.empty()) hint = "; allowed: " + join(allowed);
    fail(key.source(), fmt::format("{}: unknown key{}", full, hint));
  }
}

const toml::table& Fields::table(const toml::node& node, const std::string& path) const {
  if (auto t = node.as_table()) return *t;
  fail(node, fmt::format("{} = {}: must be a table", path, describe(node)));
}

const toml::array& Fields::array(const toml::node& node, const std::string& path) const {
  if (auto a = node.as_array()) return *a;
  fail(node, fmt::format("{} = {}: must be an array", path, describe(node)));
}

std::string Fields::string(const toml::node& node, const std::string& path) const {
  if (auto s = node.as_string()) return s->get();
  fail(node, fmt::format("{} = {}: must be a string", path, describe(node)));
}

std::string Fields::identifier(const toml::node& node, const std::string& path) const {
  return identifier(string(node, path), node.source(), path);
}

std::string Fields::identifier(const std::string& s, const toml::source_region& at,
                               const std::string& path) const {
  bool ok = !s.empty() && s.size() <= 64;
  for (char c : s)
    ok = ok && (std::isalnum(static_cast<unsigned char>(c)) || c == '_' || c == '-' || c == '.');
  if (!ok)
    fail(at, fmt::format("{} = \"{}\": must be 1 to 64 characters of letters, digits, '_', '-' or '.'",
                         path, s));
  return s;
}

std::int64_t Fields::integer(const toml::node& node, const std::string& path, std::int64_t lo,
                             std::int64_t hi) const {
  auto i = node.as_integer();
  if (!i || i->get() < lo || i->get() > hi)
    fail(node, fmt::format("{} = {}: must be an integer within [{}, {}]", path, describe(node), lo, hi));
  return i->get();
}

double Fields::number(const toml::node& node, const std::string& path, double lo, double hi) const {
  if (!node.is_number())
    fail(node, fmt::format("{} = {}: must be a number within [{}, {}]", path, describe(node), lo, hi));
  double v = toml_number(node);
  // An integer beyond 2^53 rounds on conversion: name it as written.
  if (node.is_integer() && !(v >= lo && v <= hi))
    fail(node, fmt::format("{} = {}: must be within [{}, {}]", path, describe(node), lo, hi));
  located(node, [&] { check_in_range(path, v, lo, hi); });
  return v;
}

std::vector<double> Fields::weights(const toml::node& node, const std::string& path,
                                    std::size_t n) const {
  const toml::array& arr = array(node, path);
  if (arr.size() != n)
    fail(node, fmt::format("{}: has {} entries: must have one per choice ({})", path, arr.size(), n));
  std::vector<double> w;
  double sum = 0;
  for (std::size_t i = 0; i < arr.size(); ++i) {
    std::string p = fmt::format("{}[{}]", path, i);
    if (!arr[i].is_number())
      fail(arr[i], fmt::format("{} = {}: must be a number >= 0", p, describe(arr[i])));
    w.push_back(toml_number(arr[i]));
    if (arr[i].is_integer() && w.back() < 0) fail(arr[i], fmt::format("{} = {}: must be >= 0", p, describe(arr[i])));
    located(arr[i], [&] { check_non_negative(p, w.back()); });
    sum += w.back();
  }
  if (!(sum > 0)) fail(node, fmt::format("{}: weights sum to 0: at least one must be > 0", path));
  if (!std::isfinite(sum)) fail(node, fmt::format("{}: weights sum to infinity: use smaller weights", path));
  return w;
}

Distribution Fields::distribution(const toml::node& node, const std::string& path, double lo,
                                  double hi) const {
  Distribution d;
  if (node.is_number()) {
    d.value = number(node, path, lo, hi);
    return d;
  }
  if (!node.is_table())
    fail(node, fmt::format("{} = {}: must be a number within [{}, {}] or a table with uniform, "
                           "normal or choice",
                           path, describe(node), lo, hi));
  const toml::table& t = *node.as_table();
  reject_unknown_keys(t, path, {"uniform", "normal", "choice", "weights"});
  int kinds = t.contains("uniform") + t.contains("normal") + t.contains("choice");
  if (kinds != 1)
    fail(node, fmt::format("{}: must have exactly one of uniform, normal or choice", path));
  if (t.contains("weights") && !t.contains("choice"))
    fail(*t.get("weights"), fmt::format("{}.weights: only allowed with choice", path));

  if (const toml::node* u = t.get("uniform")) {
    std::string p = path + ".uniform";
    const toml::array& a = array(*u, p);
    if (a.size() != 2) fail(*u, fmt::format("{}: must be [lo, hi] (2 numbers), has {}", p, a.size()));
    d.kind = Distribution::Kind::uniform;
    d.lo = number(a[0], p + "[0]", lo, hi);
    d.hi = number(a[1], p + "[1]", lo, hi);
    if (!(d.lo < d.hi)) fail(*u, fmt::format("{} = [{}, {}]: lo must be < hi", p, d.lo, d.hi));
  } else if (const toml::node* n = t.get("normal")) {
    std::string p = path + ".normal";
    const toml::table& nt = table(*n, p);
    reject_unknown_keys(nt, p, {"mean", "sd", "min", "max"});
    if (!nt.contains("mean") || !nt.contains("sd"))
      fail(*n, fmt::format("{}: needs mean and sd (min and max are optional)", p));
    d.kind = Distribution::Kind::normal;
    d.lo = nt.contains("min") ? number(*nt.get("min"), p + ".min", lo, hi) : lo;
    d.hi = nt.contains("max") ? number(*nt.get("max"), p + ".max", lo, hi) : hi;
    if (!(d.lo < d.hi)) fail(*n, fmt::format("{}: min = {} must be < max = {}", p, d.lo, d.hi));
    d.mean = number(*nt.get("mean"), p + ".mean", d.lo, d.hi);
    const toml::node& sd = *nt.get("sd");
    d.sd = number(sd, p + ".sd", 0, hi - lo);
    if (!(d.sd > 0)) fail(sd, fmt::format("{}.sd = {}: must be > 0", p, d.sd));
  } else {
    std::string p = path + ".choice";
    const toml::node& c = *t.get("choice");
    const toml::array& a = array(c, p);
    if (a.empty()) fail(c, fmt::format("{}: must list at least one value", p));
    d.kind = Distribution::Kind::choice;
    for (std::size_t i = 0; i < a.size(); ++i)
      d.values.push_back(number(a[i], fmt::format("{}[{}]", p, i), lo, hi));
    d.weights = t.contains("weights") ? weights(*t.get("weights"), path + ".weights", a.size())
                                      : std::vector<double>(a.size(), 1.0);
  }
  return d;
}

}  // namespace stethogen::recipe::detail
