#include "recipe/plan.hpp"

#include <algorithm>
#include <stdexcept>

#include <fmt/format.h>

#include "core/random.hpp"

namespace stethogen::recipe {
namespace {

// Each quantity draws from its own sub-stream, so configuring one never shifts another.
RandomStream stream_for(const Recipe& recipe, std::uint64_t record_index, std::uint32_t slot) {
  return RandomStream(recipe.dataset.seed, record_index, stream_id(Stream::plan_parameters, slot));
}

double draw(const Recipe& recipe, std::uint64_t record_index, Param p, const Distribution& d) {
  RandomStream rng = stream_for(recipe, record_index, static_cast<std::uint32_t>(p));
  return d.draw(rng);
}

}  // namespace

std::uint64_t record_count(const Recipe& recipe) {
  const auto& first = recipe.first_record;
  if (!first.empty() && first.size() == recipe.populations.size())
    return first.back() + recipe.populations.back().count;
  std::uint64_t n = 0;
  for (const PopulationSpec& p : recipe.populations) n += p.count;
  return n;
}

std::string record_id(std::uint64_t record_index) { return fmt::format("r{:06d}", record_index); }

std::size_t population_of(const Recipe& recipe, std::uint64_t record_index) {
  const std::uint64_t total = record_count(recipe);
  if (record_index >= total)
    throw std::out_of_range(fmt::format("record index {} is past the end of the plan ({} records)",
                                        record_index, total));
  const auto& first = recipe.first_record;
  if (first.size() == recipe.populations.size()) {
    // The last population starting at or before record_index (counts are >= 1).
    auto it = std::upper_bound(first.begin(), first.end(), record_index);
    return static_cast<std::size_t>(it - first.begin()) - 1;
  }
  std::uint64_t end = 0;
  std::size_t i = 0;
  while (record_index >= (end += recipe.populations[i].count)) ++i;
  return i;
}

SubjectSpec plan_record(const Recipe& recipe, std::uint64_t record_index) {
  const std::size_t pop_index = population_of(recipe, record_index);
  const PopulationSpec& pop = recipe.populations[pop_index];
  const DatasetSpec& ds = recipe.dataset;

  SubjectSpec s;
  s.dataset_seed = ds.seed;
  s.record_index = record_index;
  s.record_id = record_id(record_index);
  s.population = pop.name;
  s.population_index = static_cast<std::uint32_t>(pop_index);
  s.state = pop.state;
  s.sample_rate_hz = ds.sample_rate_hz;
  s.sites = ds.sites;
  s.sensor = ds.sensor;
  s.sample_format = ds.sample_format;

  auto value_of = [&](Param p) -> std::optional<double> {
    const auto& d = pop.params[static_cast<std::size_t>(p)];
    if (!d) return std::nullopt;
    return draw(recipe, record_index, p, *d);
  };
  SubjectParams& q = s.params;
  if (auto v = value_of(Param::intensity)) s.exercise_intensity = *v;
  if (auto v = value_of(Param::severity)) s.severity = *v;
  // The dataset's duration is drawn on the same sub-stream as a population's override.
  q.duration_s = value_of(Param::duration_s)
                     .value_or(draw(recipe, record_index, Param::duration_s, ds.duration_s));
  q.heart_rate_bpm = value_of(Param::heart_rate_bpm);
  q.snr_db = value_of(Param::snr_db);
  auto set = [&](Param p, double& field) {
    if (auto v = value_of(p)) field = *v;
  };
  set(Param::respiration_rate_per_min, q.respiration_rate_per_min);
  set(Param::respiration_depth_mmhg, q.respiration_depth_mmhg);
  set(Param::rsa_fraction, q.rsa_fraction);
  set(Param::lf_fraction, q.lf_fraction);
  set(Param::blood_volume_ml, q.blood_volume_ml);
  set(Param::pr_interval_ms, q.pr_interval_ms);
  set(Param::lv_rv_delay_ms, q.lv_rv_delay_ms);
  set(Param::chest_wall_mm, q.chest_wall_mm);
  set(Param::sensor_gain_db, q.sensor_gain_db);
  set(Param::source_variation, q.source_variation);

  if (!pop.noise.names.empty()) {
    std::size_t k = 0;
    if (pop.noise.names.size() > 1) {
      RandomStream rng = stream_for(recipe, record_index, kNoiseChoiceSlot);
      k = rng.weighted_choice(pop.noise.weights);
    }
    s.noise_profile_name = pop.noise.names[k];
    s.noise_profile = recipe.noise_profiles.at(s.noise_profile_name);
  }
  return s;
}

}  // namespace stethogen::recipe
