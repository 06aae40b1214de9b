// [[population]] and [[sweep]]: count, state, intensity or severity, parameter distributions
// and noise references; sweeps expand their grid into one population per grid point.
#include <fmt/format.h>

#include "core/suggest.hpp"
#include "recipe/sections.hpp"

namespace stethogen::recipe::detail {
namespace {

bool is_failure(State s) {
  return s == State::lv_failure || s == State::rv_failure || s == State::global_failure;
}

std::string join(const std::vector<std::string>& names) {
  std::string out;
  for (const std::string& n : names) out += (out.empty() ? "" : ", ") + n;
  return out;
}

std::vector<std::string> with(std::vector<std::string> keys, std::initializer_list<const char*> more) {
  keys.insert(keys.end(), more.begin(), more.end());
  return keys;
}

std::string profile_name(const Fields& f, const toml::node& node, const std::string& path,
                         const ProfileMap& profiles) {
  std::string name = f.string(node, path);
  if (profiles.count(name)) return name;
  std::vector<std::string> defined;
  for (const auto& [n, p] : profiles) defined.push_back(n);
  if (defined.empty())
    f.fail(node, fmt::format("{} = \"{}\": no such noise profile; the recipe defines none "
                             "(add a [noise.{}] table)", path, name, name));
  f.fail(node, fmt::format("{} = \"{}\": no such noise profile{}; defined: {}", path, name,
                           did_you_mean(name, defined), join(defined)));
}

// noise = "name" or noise = { choice = ["a", "b"], weights = [3, 1] }.
NoiseChoice noise_choice(const Fields& f, const toml::node& node, const std::string& path,
                         const ProfileMap& profiles) {
  NoiseChoice c;
  if (node.is_string()) {
    c.names = {profile_name(f, node, path, profiles)};
    c.weights = {1.0};
    return c;
  }
  if (!node.is_table())
    f.fail(node, fmt::format("{} = {}: must be a profile name or {{ choice = [names], weights = "
                             "[numbers] }}", path, describe(node)));
  const toml::table& t = *node.as_table();
  f.reject_unknown_keys(t, path, {"choice", "weights"});
  const toml::node* choice = t.get("choice");
  if (!choice) f.fail(node, path + ": needs choice = [profile names]");
  const toml::array& names = f.array(*choice, path + ".choice");
  if (names.empty()) f.fail(*choice, path + ".choice: must list at least one profile");
  for (std::size_t i = 0; i < names.size(); ++i)
    c.names.push_back(profile_name(f, names[i], fmt::format("{}.choice[{}]", path, i), profiles));
  c.weights = t.contains("weights") ? f.weights(*t.get("weights"), path + ".weights", names.size())
                                    : std::vector<double>(names.size(), 1.0);
  return c;
}

// The keys [[population]] and [[sweep]] share.
void read_body(const Fields& f, const toml::table& t, const std::string& path, PopulationSpec& pop,
               const ProfileMap& profiles) {
  const toml::node* count = t.get("count");
  if (!count) f.fail(t, path + ".count: missing (number of records, an integer >= 1)");
  pop.count = static_cast<std::uint64_t>(f.integer(*count, path + ".count", 1, kMaxPopulationCount));
  const toml::node* state = t.get("state");
  if (!state) f.fail(t, fmt::format("{}.state: missing (one of {})", path, allowed_states()));
  std::string s = f.string(*state, path + ".state");
  std::vector<std::string> states;
  for (State v : kAllStates) states.emplace_back(name(v));
  auto parsed = parse_state(s);
  if (!parsed)
    f.fail(*state, fmt::format("{}.state = \"{}\": must be one of {}{}", path, s, join(states),
                               did_you_mean(s, states)));
  pop.state = *parsed;
  if (auto n = t.get("noise")) pop.noise = noise_choice(f, *n, path + ".noise", profiles);
  for (const ParamInfo& i : param_table())
    if (auto n = t.get(i.key))
      pop.params[static_cast<std::size_t>(i.param)] =
          f.distribution(*n, path + "." + std::string(i.key), i.lo, i.hi);
}

// intensity belongs to exercise and severity to the failure states, each required there.
// grid: a sweep's grid, whose axes count as set.
void check_state_keys(const Fields& f, const toml::table& t, const std::string& path, State state,
                      const toml::table* grid) {
  auto find = [&](const char* key) -> const toml::node* {
    if (auto n = t.get(key)) return n;
    return grid ? grid->get(key) : nullptr;
  };
  const std::string st(name(state));
  if (auto n = find("intensity"); n && state != State::exercise)
    f.fail(*n, fmt::format("{}.intensity: only for state \"exercise\" (this state is \"{}\"{})", path,
                           st, is_failure(state) ? "; failure states take severity" : ""));
  if (auto n = find("severity"); n && !is_failure(state))
    f.fail(*n, fmt::format("{}.severity: only for the failure states lv_failure, rv_failure, "
                           "global_failure (this state is \"{}\"{})", path, st,
                           state == State::exercise ? "; exercise takes intensity" : ""));
  if (state == State::exercise && !find("intensity"))
    f.fail(t, path + ": state \"exercise\" needs intensity (within [0, 1])");
  if (is_failure(state) && !find("severity"))
    f.fail(t, fmt::format("{}: state \"{}\" needs severity (within [0, 1])", path, st));
}

const toml::array* array_of_tables(const Fields& f, const toml::table& doc, const char* key) {
  const toml::node* node = doc.get(key);
  if (!node) return nullptr;
  const toml::array* arr = node->as_array();
  if (!arr || !arr->is_array_of_tables())
    f.fail(*node, fmt::format("{}: must be an array of tables, written [[{}]]", key, key));
  return arr;
}

// Tracks used population names and the total record count across the recipe.
struct Registry {
  const Fields& f;
  std::map<std::string, std::string> owner;  // name -> where it was defined
  std::uint64_t records = 0;

  // name_node/what: where the name comes from and how to say so; count_node: its count.
  void add(const std::string& name, const toml::node& name_node, const std::string& what,
           const std::string& owner_path, const toml::node& count_node, const std::string& count_path,
           std::uint64_t count) {
    auto [it, fresh] = owner.emplace(name, owner_path);
    if (!fresh)
      f.fail(name_node, fmt::format("{}: name already used by {}", what, it->second));
    records += count;
    if (records > kMaxRecords)
      f.fail(count_node, fmt::format("{} = {}: brings the recipe to {} records, more than the {} "
                                     "allowed in one dataset",
                                     count_path, count, records, kMaxRecords));
  }
};

// One axis of a sweep grid: a Param or the noise profile, and its values.
struct Axis {
  std::string key;
  std::optional<Param> param;
  std::vector<double> values;
  std::vector<std::string> profiles;
  std::size_t size() const { return param ? values.size() : profiles.size(); }
};

std::vector<Axis> read_grid(const Fields& f, const toml::table& t, const std::string& path,
                            const ProfileMap& profiles) {
  const toml::node* node = t.get("grid");
  if (!node) f.fail(t, path + ".grid: missing (e.g. grid = { snr_db = [0, 10, 20] })");
  const std::string gpath = path + ".grid";
  const toml::table& grid = f.table(*node, gpath);
  if (grid.empty()) f.fail(*node, gpath + ": has no axis, so the sweep expands to nothing");
  f.reject_unknown_keys(grid, gpath, with(param_keys(), {"noise"}));
  std::vector<Axis> axes;
  std::size_t points = 1;
  for (auto&& [key, value] : grid) {
    Axis a;
    a.key = std::string(key.str());
    a.param = parse_param(a.key);
    std::string apath = gpath + "." + a.key;
    if (t.contains(a.key))
      f.fail(key.source(), fmt::format("{}: also set as {}.{}: set it in one place", apath, path, a.key));
    const toml::array& arr = f.array(value, apath);
    if (arr.empty()) f.fail(value, apath + ": empty axis, so the sweep expands to nothing");
    for (std::size_t i = 0; i < arr.size(); ++i) {
      std::string p = fmt::format("{}[{}]", apath, i);
      bool duplicate = false;
      if (a.param) {
        const ParamInfo& inf = info(*a.param);
        double v = f.number(arr[i], p, inf.lo, inf.hi);
        for (double seen : a.values) duplicate = duplicate || seen == v;
        a.values.push_back(v);
      } else {
        std::string name = profile_name(f, arr[i], p, profiles);
        for (const std::string& seen : a.profiles) duplicate = duplicate || seen == name;
        a.profiles.push_back(name);
      }
      if (duplicate) f.fail(arr[i], fmt::format("{} = {}: listed twice", p, describe(arr[i])));
    }
    points *= a.size();
    if (points > kMaxGridPoints)
      f.fail(*node, fmt::format("{}: more than {} grid points", gpath, kMaxGridPoints));
    axes.push_back(std::move(a));
  }
  return axes;
}

// The cartesian product of the axes, first axis outermost; names <sweep>_<tag><value>...
void expand(const PopulationSpec& base, const std::vector<Axis>& axes, const toml::table& sweep,
            const std::string& path, Registry& names, std::vector<PopulationSpec>& out) {
  std::vector<std::size_t> pos(axes.size(), 0);
  while (true) {
    PopulationSpec p = base;
    for (std::size_t k = 0; k < axes.size(); ++k) {
      const Axis& a = axes[k];
      if (a.param) {
        double v = a.values[pos[k]];
        p.params[static_cast<std::size_t>(*a.param)] = Distribution::fixed_value(v);
        p.name += fmt::format("_{}{}", info(*a.param).name_tag, v);
      } else {
        p.noise = NoiseChoice{{a.profiles[pos[k]]}, {1.0}};
        p.name += "_" + a.profiles[pos[k]];
      }
    }
    names.add(p.name, *sweep.get("name"), fmt::format("{} generates population \"{}\"", path, p.name),
              path, *sweep.get("count"), path + ".count", p.count);
    out.push_back(std::move(p));
    std::size_t k = axes.size();
    while (k > 0 && ++pos[k - 1] == axes[k - 1].size()) pos[--k] = 0;
    if (k == 0) return;
  }
}

}  // namespace

std::vector<PopulationSpec> parse_populations(const Fields& f, const toml::table& doc,
                                              const ProfileMap& profiles) {
  const std::vector<std::string> pop_keys = with(param_keys(), {"name", "count", "state", "noise"});
  std::vector<PopulationSpec> out;
  Registry names{f, {}, 0};
  if (auto pops = array_of_tables(f, doc, "population")) {
    for (std::size_t i = 0; i < pops->size(); ++i) {
      const std::string path = fmt::format("population[{}]", i);
      const toml::table& t = *(*pops)[i].as_table();
      if (auto g = t.get("grid"))
        f.fail(*g, path + ".grid: only a [[sweep]] takes a grid (write this population as a [[sweep]])");
      f.reject_unknown_keys(t, path, pop_keys);
      PopulationSpec p;
      const toml::node* name = t.get("name");
      if (!name) f.fail(t, path + ".name: missing (each population needs a unique name)");
      p.name = f.identifier(*name, path + ".name");
      read_body(f, t, path, p, profiles);
      check_state_keys(f, t, path, p.state, nullptr);
      names.add(p.name, *name, fmt::format("{}.name = \"{}\"", path, p.name), path, *t.get("count"),
                path + ".count", p.count);
      out.push_back(std::move(p));
    }
  }
  std::map<std::string, std::string> sweep_names;  // name -> key path
  if (auto sweeps = array_of_tables(f, doc, "sweep")) {
    for (std::size_t i = 0; i < sweeps->size(); ++i) {
      const std::string path = fmt::format("sweep[{}]", i);
      const toml::table& t = *(*sweeps)[i].as_table();
      f.reject_unknown_keys(t, path, with(pop_keys, {"grid"}));
      PopulationSpec base;
      const toml::node* name = t.get("name");
      if (!name) f.fail(t, path + ".name: missing (the prefix of the generated population names)");
      base.name = f.identifier(*name, path + ".name");
      base.sweep = base.name;
      if (!sweep_names.emplace(base.name, path).second)
        f.fail(*name, fmt::format("{}.name = \"{}\": sweep name already used by {}", path, base.name,
                                  sweep_names.at(base.name)));
      read_body(f, t, path, base, profiles);
      std::vector<Axis> axes = read_grid(f, t, path, profiles);
      check_state_keys(f, t, path, base.state, t.get("grid")->as_table());
      expand(base, axes, t, path, names, out);
    }
  }
  if (out.empty())
    throw InputError(f.file() + ": the recipe defines no population: add a [[population]] or a [[sweep]]");
  return out;
}

}  // namespace stethogen::recipe::detail
