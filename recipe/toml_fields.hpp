// Reading typed, range-checked values out of TOML nodes, with every error located at
// "file:line:column". Internal to recipe/; includes toml++, so only the parser files use it.
#pragma once

#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

#include <toml++/toml.h>

#include "core/error.hpp"
#include "recipe/distribution.hpp"

namespace stethogen::recipe::detail {

// One TOML document being read: knows the file name for messages.
class Fields {
 public:
  explicit Fields(std::string file) : file_(std::move(file)) {}
  const std::string& file() const { return file_; }

  SourceLocation where(const toml::source_region& region) const;
  SourceLocation where(const toml::node& node) const { return where(node.source()); }

  // Throws InputError "file:line:column: message".
  [[noreturn]] void fail(const toml::node& node, const std::string& message) const;
  [[noreturn]] void fail(const toml::source_region& region, const std::string& message) const;
  // Runs check (a check_* call that may throw InputError) and prefixes the node's location.
  template <typename Check>
  void located(const toml::node& node, Check&& check) const {
    try {
      check();
    } catch (const InputError& e) {
      fail(node, e.what());
    }
  }

  // Every key of table must be in allowed; else "path.key: unknown key (did you mean ...)".
  void reject_unknown_keys(const toml::table& table, const std::string& path,
                           const std::vector<std::string>& allowed) const;

  // Typed readers: node is the value, path its key path for messages.
  const toml::table& table(const toml::node& node, const std::string& path) const;
  const toml::array& array(const toml::node& node, const std::string& path) const;
  std::string string(const toml::node& node, const std::string& path) const;
  // A string that names things (population, profile, sweep): [A-Za-z0-9_.-], 1..64 characters.
  std::string identifier(const toml::node& node, const std::string& path) const;
  std::string identifier(const std::string& s, const toml::source_region& at,
                         const std::string& path) const;
  std::int64_t integer(const toml::node& node, const std::string& path, std::int64_t lo,
                       std::int64_t hi) const;
  // Integer or floating point, finite, within [lo, hi].
  double number(const toml::node& node, const std::string& path, double lo, double hi) const;
  // A number, { uniform = [lo, hi] }, { normal = { mean, sd, min, max } } or
  // { choice = [...], weights = [...] }, whose support lies within [lo, hi].
  Distribution distribution(const toml::node& node, const std::string& path, double lo,
                            double hi) const;
  // Weights for a choice of n items: n finite numbers >= 0 with a positive sum.
  std::vector<double> weights(const toml::node& node, const std::string& path, std::size_t n) const;

 private:
  std::string file_;
};

// "\"text\"", "12", "1.5", "true", "an array", "a table": how a value is quoted in messages.
std::string describe(const toml::node& node);

}  // namespace stethogen::recipe::detail
