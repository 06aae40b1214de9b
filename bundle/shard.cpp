#include "bundle/shard.hpp"

#include <charconv>
#include <cstdlib>

#include <fmt/format.h>

#include "core/error.hpp"

namespace stethogen::bundle {

namespace {

std::optional<std::int64_t> parse_int(const std::string& s) {
  std::int64_t v = 0;
  auto [ptr, ec] = std::from_chars(s.data(), s.data() + s.size(), v);
  if (ec != std::errc{} || ptr != s.data() + s.size() || s.empty()) return std::nullopt;
  return v;
}

std::optional<std::string> lookup(const std::map<std::string, std::string>& env, const std::string& key) {
  auto it = env.find(key);
  if (it == env.end() || it->second.empty()) return std::nullopt;
  return it->second;
}

std::int64_t env_int(const std::map<std::string, std::string>& env, const std::string& key) {
  auto text = lookup(env, key).value_or("");
  auto v = parse_int(text);
  if (!v) throw InputError(fmt::format("environment {} = '{}': must be an integer", key, text));
  return *v;
}

}  // namespace

std::string Shard::tag() const { return fmt::format("{}-of-{}", index + 1, count); }

RecordRange shard_range(const Shard& shard, std::uint64_t n) {
  // floor(k * n / count) without overflow: n = q * count + r.
  const std::uint64_t q = n / shard.count, r = n % shard.count;
  auto bound = [&](std::uint64_t k) { return k * q + k * r / shard.count; };
  return {bound(shard.index), bound(shard.index + 1)};
}

Shard parse_shard(const std::string& text) {
  auto slash = text.find('/');
  const auto bad = [&] {
    return InputError(fmt::format("--shard = '{}': must be K/N with 1 <= K <= N (1-based, e.g. 2/3)", text));
  };
  if (slash == std::string::npos) throw bad();
  const std::int64_t k = parse_int(text.substr(0, slash)).value_or(0);
  const std::int64_t n = parse_int(text.substr(slash + 1)).value_or(0);
  if (n < 1 || k < 1 || k > n || n > 1000000) throw bad();
  return Shard{static_cast<std::uint32_t>(k - 1), static_cast<std::uint32_t>(n), "--shard"};
}

Shard resolve_shard(const std::optional<std::string>& option, std::optional<std::uint32_t> count,
                    const std::map<std::string, std::string>& env) {
  if (option) {
    if (count) throw InputError("--shard-count: only with JOB_COMPLETION_INDEX, not with --shard K/N");
    return parse_shard(*option);
  }
  if (lookup(env, "SLURM_ARRAY_TASK_ID")) {
    std::int64_t id = env_int(env, "SLURM_ARRAY_TASK_ID");
    std::int64_t min = lookup(env, "SLURM_ARRAY_TASK_MIN") ? env_int(env, "SLURM_ARRAY_TASK_MIN") : 0;
    std::int64_t n = 0;
    if (count) n = *count;
    else if (lookup(env, "SLURM_ARRAY_TASK_COUNT")) n = env_int(env, "SLURM_ARRAY_TASK_COUNT");
    else if (lookup(env, "SLURM_ARRAY_TASK_MAX")) n = env_int(env, "SLURM_ARRAY_TASK_MAX") - min + 1;
    else throw InputError("SLURM_ARRAY_TASK_ID is set but neither SLURM_ARRAY_TASK_COUNT nor SLURM_ARRAY_TASK_MAX; "
                          "pass --shard-count N");
    std::int64_t k = id - min;
    if (n < 1 || k < 0 || k >= n)
      throw InputError(fmt::format("SLURM_ARRAY_TASK_ID = {} (array minimum {}, count {}): outside the array; "
                                   "use a contiguous array such as --array=0-{}", id, min, n, n > 0 ? n - 1 : 0));
    return Shard{static_cast<std::uint32_t>(k), static_cast<std::uint32_t>(n), "SLURM_ARRAY_TASK_ID"};
  }
  if (lookup(env, "JOB_COMPLETION_INDEX")) {
    std::int64_t k = env_int(env, "JOB_COMPLETION_INDEX");
    if (!count) throw InputError("JOB_COMPLETION_INDEX is set: pass --shard-count N (the Job's completions)");
    if (k < 0 || k >= *count)
      throw InputError(fmt::format("JOB_COMPLETION_INDEX = {}: must be within [0, {})", k, *count));
    return Shard{static_cast<std::uint32_t>(k), *count, "JOB_COMPLETION_INDEX"};
  }
  if (count) throw InputError("--shard-count: needs JOB_COMPLETION_INDEX or SLURM_ARRAY_TASK_ID in the environment");
  return Shard{};
}

std::map<std::string, std::string> shard_environment() {
  std::map<std::string, std::string> env;
  for (const char* key : {"SLURM_ARRAY_TASK_ID", "SLURM_ARRAY_TASK_COUNT", "SLURM_ARRAY_TASK_MIN",
                          "SLURM_ARRAY_TASK_MAX", "JOB_COMPLETION_INDEX"})
    if (const char* v = std::getenv(key)) env[key] = v;
  return env;
}

}  // namespace stethogen::bundle
