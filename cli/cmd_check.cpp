// `stethogen check RECIPE`: validates the recipe and prints its plan (populations, the ranges
// the parameters were actually drawn in, totals, estimated size). Writes nothing.
#include <algorithm>
#include <cmath>
#include <limits>
#include <map>
#include <string>

#include <fmt/format.h>

#include "cli/command.hpp"
#include "recipe/plan.hpp"
#include "recipe/recipe.hpp"

namespace stethogen::cli {
namespace {

// Bytes per stored sample of each format.
std::size_t sample_bytes(SampleFormat f) {
  switch (f) {
    case SampleFormat::float32: return 4;
    case SampleFormat::int16: return 2;
    case SampleFormat::int24: return 3;
  }
  return 4;
}

struct MinMax {
  double lo = std::numeric_limits<double>::infinity();
  double hi = -std::numeric_limits<double>::infinity();
  void add(double v) {
    lo = std::min(lo, v);
    hi = std::max(hi, v);
  }
  std::string str(std::string_view unit) const {
    std::string u = unit.empty() ? "" : " " + std::string(unit);
    if (lo == hi) return fmt::format("{:.4g}{}", lo, u);
    return fmt::format("{:.4g}..{:.4g}{}", lo, hi, u);
  }
};

std::string human_bytes(double bytes) {
  const char* units[] = {"B", "kB", "MB", "GB", "TB"};
  int u = 0;
  while (bytes >= 1000 && u < 4) {
    bytes /= 1000;
    ++u;
  }
  return fmt::format("{:.3g} {}", bytes, units[u]);
}

int run_check(const std::string& path) {
  const recipe::Recipe r = recipe::load_recipe(path);
  const recipe::DatasetSpec& ds = r.dataset;
  std::string sites;
  for (Site s : ds.sites) sites += (sites.empty() ? "" : ", ") + std::string(name(s));
  fmt::print("recipe {} is valid (sha256 {})\n", r.path, r.sha256_hex);
  fmt::print("dataset {}: seed {}, {} Hz, sites {}, sensor {}, {} samples, output {}, on record "
             "error {}\n",
             ds.name, ds.seed, ds.sample_rate_hz, sites, name(ds.sensor), name(ds.sample_format),
             ds.output, name(ds.on_record_error));
  std::string profiles;
  for (const auto& [n, p] : r.noise_profiles) profiles += (profiles.empty() ? "" : ", ") + n;
  fmt::print("noise profiles: {}\n\n", profiles.empty() ? "none" : profiles);

  double total_s = 0, total_bytes = 0;
  const double bytes_per_site_sample = 2.0 * sample_bytes(ds.sample_format) + 1.0;  // pcg, clean, label
  std::size_t width = 10;
  for (const recipe::PopulationSpec& pop : r.populations) width = std::max(width, pop.name.size());
  fmt::print("{:<{}}  {:<14}  {:>7}  {:<14}  {:<16}  {:<18}  {}\n", "population", width, "state",
             "records", "grade", "duration_s", "snr_db", "noise");
  std::uint64_t index = 0;
  for (const recipe::PopulationSpec& pop : r.populations) {
    std::map<recipe::Param, MinMax> ranges;
    std::map<std::string, std::uint64_t> noise_counts;
    for (std::uint64_t k = 0; k < pop.count; ++k, ++index) {
      const SubjectSpec s = recipe::plan_record(r, index);
      for (const recipe::ParamInfo& i : recipe::param_table())
        if (pop.params[static_cast<std::size_t>(i.param)] || i.param == recipe::Param::duration_s)
          ranges[i.param].add(recipe::planned_value(s, i.param));
      if (!s.noise_profile_name.empty()) ++noise_counts[s.noise_profile_name];
      total_s += s.params.duration_s;
      total_bytes += std::round(s.params.duration_s * ds.sample_rate_hz) *
                     static_cast<double>(ds.sites.size()) * bytes_per_site_sample;
    }
    // The columns: grade (intensity or severity), duration, SNR and noise; then the rest.
    auto take = [&](recipe::Param p, const char* prefix = "") -> std::string {
      auto it = ranges.find(p);
      if (it == ranges.end()) return "-";
      std::string text = prefix + it->second.str(recipe::info(p).unit);
      ranges.erase(it);
      return text;
    };
    std::string grade = take(recipe::Param::intensity, "i ");
    if (grade == "-") grade = take(recipe::Param::severity, "sev ");
    std::string duration = take(recipe::Param::duration_s);
    std::string snr = take(recipe::Param::snr_db);
    std::string noise;
    for (const auto& [n, c] : noise_counts) noise += fmt::format("{}{} ({})", noise.empty() ? "" : ", ", n, c);
    fmt::print("{:<{}}  {:<14}  {:>7}  {:<14}  {:<16}  {:<18}  {}\n", pop.name, width, name(pop.state),
               pop.count, grade, duration, snr, noise.empty() ? "-" : noise);
    std::string others;
    for (const auto& [p, mm] : ranges)
      others += fmt::format("{}{} {}", others.empty() ? "" : "; ", recipe::info(p).key,
                            mm.str(recipe::info(p).unit));
    if (!others.empty()) fmt::print("{:<{}}  {}\n", "", width, others);
  }
  fmt::print("\ntotal: {} populations, {} records, {:.3g} hours of audio, estimated output {} "
             "uncompressed (pcg, pcg_clean and labels)\n",
             r.populations.size(), index, total_s / 3600.0, human_bytes(total_bytes));
  return kExitOk;
}

}  // namespace

Command add_check(CLI::App& root) {
  CLI::App* app = root.add_subcommand(
      "check", "Validate a recipe and print its plan (populations, drawn parameter ranges, "
               "totals, estimated size); writes nothing");
  auto path = std::make_shared<std::string>();
  app->add_option("RECIPE", *path, "recipe file (TOML), see docs/recipe.md")->required();
  return {app, [path] { return run_check(*path); }};
}

}  // namespace stethogen::cli
