#include "noise/profile.hpp"

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <sstream>
#include <toml++/toml.h>

#include <fmt/format.h>

#include "core/error.hpp"
#include "core/suggest.hpp"
#include "core/toml_number.hpp"
#include "noise/recording.hpp"

namespace stethogen::noise {

std::string_view name(NoiseColor color) {
  switch (color) {
    case NoiseColor::white: return "white";
    case NoiseColor::pink: return "pink";
    case NoiseColor::brown: return "brown";
    case NoiseColor::band: return "band";
  }
  return "?";
}

namespace {

// Reads one process table: every key must be known, every value of the right type and range.
class Reader {
 public:
  Reader(const toml::table& table, std::string key_path, const std::string& file,
         std::vector<std::string> allowed)
      : table_(table), path_(std::move(key_path)), file_(file), allowed_(std::move(allowed)) {
    for (const auto& [key, node] : table_) {
      std::string k(key.str());
      if (std::find(allowed_.begin(), allowed_.end(), k) == allowed_.end())
        fail(key.source(), path_ + "." + k, "", "unknown key" + did_you_mean(k, allowed_) +
                                                    "; allowed: " + join(allowed_));
    }
  }

  [[noreturn]] void fail(const toml::node& node, const std::string& key, const std::string& value,
                         const std::string& message) const {
    fail(node.source(), key, value, message);
  }
  [[noreturn]] void fail(const toml::source_region& src, const std::string& key, const std::string& value,
                         const std::string& message) const {
    std::string where = SourceLocation{file_, src.begin.line, src.begin.column}.str();
    std::string text = where.empty() ? "" : where + ": ";
    text += value.empty() ? key + ": " + message : key + " = " + value + ": " + message;
    throw InputError(text);
  }

  std::string key(const std::string& k) const { return path_ + "." + k; }
  const toml::node* get(const std::string& k) const { return table_.get(k); }

  // A number within [lo, hi]; integers are accepted for floating-point fields.
  void number(const std::string& k, double& out, double lo, double hi) const {
    const toml::node* n = get(k);
    if (!n) return;
    if (!n->is_number()) fail(*n, key(k), text_of(*n), "must be a number");
    double v = toml_number(*n);
    if (!std::isfinite(v) || v < lo || v > hi)
      fail(*n, key(k), n->is_integer() ? text_of(*n) : fmt::format("{}", v),
           fmt::format("must be within [{}, {}]", lo, hi));
    out = v;
  }
  void rate(const std::string& k, double& out) const {
    const toml::node* n = get(k);
    if (n && n->is_number() && toml_number(*n) < 0)
      fail(*n, key(k), text_of(*n), "must be >= 0 (events per minute)");
    number(k, out, 0, 600);
  }
  void integer(const std::string& k, int& out, int lo, int hi) const {
    const toml::node* n = get(k);
    if (!n) return;
    if (!n->is_integer()) fail(*n, key(k), text_of(*n), "must be an integer");
    std::int64_t v = n->as_integer()->get();
    if (v < lo || v > hi) fail(*n, key(k), fmt::format("{}", v), fmt::format("must be within [{}, {}]", lo, hi));
    out = static_cast<int>(v);
  }
  void boolean(const std::string& k, bool& out) const {
    const toml::node* n = get(k);
    if (!n) return;
    if (!n->is_boolean()) fail(*n, key(k), text_of(*n), "must be true or false");
    out = n->as_boolean()->get();
  }
  std::string string(const std::string& k) const {
    const toml::node* n = get(k);
    if (!n) return {};
    if (!n->is_string()) fail(*n, key(k), text_of(*n), "must be a string");
    return n->as_string()->get();
  }
  // A two-number array [lo, hi] with min <= lo < hi <= max.
  void range(const std::string& k, Range& out, double min, double max, const char* unit) const {
    const toml::node* n = get(k);
    if (!n) return;
    const toml::array* a = n->as_array();
    if (!a || a->size() != 2 || !(*a)[0].is_number() || !(*a)[1].is_number())
      fail(*n, key(k), text_of(*n), fmt::format("must be [lo, hi] in {}", unit));
    double lo = toml_number((*a)[0]), hi = toml_number((*a)[1]);
    std::string value = fmt::format("[{}, {}]", lo, hi);
    if (!(lo < hi)) fail(*n, key(k), value, "impossible range: lo must be < hi");
    if (lo < min || hi > max) fail(*n, key(k), value, fmt::format("must lie within [{}, {}] {}", min, max, unit));
    out = {lo, hi};
  }
  bool enabled() const {
    bool on = true;
    boolean("enabled", on);
    return on;
  }

  static std::string text_of(const toml::node& n) {
    std::ostringstream s;
    n.visit([&](const auto& v) { s << v; });
    return s.str();
  }
  static std::string join(const std::vector<std::string>& names) {
    std::string out;
    for (const auto& n : names) out += (out.empty() ? "" : ", ") + n;
    return out;
  }

 private:
  const toml::table& table_;
  std::string path_;
  const std::string& file_;
  std::vector<std::string> allowed_;
};

constexpr double kMinLevelDb = -60, kMaxLevelDb = 60;
constexpr double kMaxFrequencyHz = 1e5;
constexpr double kMaxDurationMs = 60000;

void parse_recording(const toml::table& t, const std::string& key_path, const std::string& file,
                     RecordingNoise& out) {
  Reader r(t, key_path, file, {"enabled", "file", "level_db", "loop", "random_offset"});
  const toml::node* file_node = t.get("file");
  if (!file_node) r.fail(t, key_path + ".file", "", "missing: the noise recording to mix in");
  out.file = r.string("file");
  out.key_path = key_path;
  r.number("level_db", out.level_db, kMinLevelDb, kMaxLevelDb);
  r.boolean("loop", out.loop);
  r.boolean("random_offset", out.random_offset);
  std::filesystem::path path(out.file);
  if (path.is_relative()) path = std::filesystem::path(file).parent_path() / path;
  try {
    out.audio = std::make_shared<const RecordingAudio>(load_recording(path.lexically_normal().string()));
  } catch (const InputError& e) {
    r.fail(*file_node, key_path + ".file", '"' + out.file + '"', e.what());
  }
}

}  // namespace

NoiseProfile parse_noise_profile(const toml::table& table, const std::string& key_path,
                                 const std::string& file) {
  NoiseProfile p;
  auto dot = key_path.rfind('.');
  p.name = dot == std::string::npos ? key_path : key_path.substr(dot + 1);
  const std::vector<std::string> processes = {"sensor_white", "ambient", "breath", "friction",
                                              "motion", "hum", "dropout", "recording"};
  Reader top(table, key_path, file, processes);
  auto section = [&](const std::string& k) -> const toml::table* {
    const toml::node* n = table.get(k);
    if (!n) return nullptr;
    if (k == "recording" && n->is_array()) return nullptr;
    if (!n->is_table()) top.fail(*n, key_path + "." + k, Reader::text_of(*n), "must be a table");
    return n->as_table();
  };

  if (auto* t = section("sensor_white")) {
    Reader r(*t, key_path + ".sensor_white", file, {"enabled", "level_db"});
    p.sensor_white.enabled = r.enabled();
    r.number("level_db", p.sensor_white.level_db, kMinLevelDb, kMaxLevelDb);
  }
  if (auto* t = section("ambient")) {
    Reader r(*t, key_path + ".ambient", file,
             {"enabled", "color", "level_db", "band_hz", "low_corner_hz", "site_coherence"});
    auto& a = p.ambient;
    a.enabled = r.enabled();
    if (const toml::node* n = t->get("color")) {
      std::string c = r.string("color");
      const std::vector<std::string> colors = {"white", "pink", "brown", "band"};
      auto it = std::find(colors.begin(), colors.end(), c);
      if (it == colors.end())
        r.fail(*n, r.key("color"), '"' + c + '"', "must be one of white, pink, brown, band" + did_you_mean(c, colors));
      a.color = static_cast<NoiseColor>(it - colors.begin());
    }
    r.number("level_db", a.level_db, kMinLevelDb, kMaxLevelDb);
    r.range("band_hz", a.band_hz, 0, kMaxFrequencyHz, "Hz");
    if (t->get("band_hz") && a.color != NoiseColor::band)
      r.fail(*t->get("band_hz"), r.key("band_hz"), Reader::text_of(*t->get("band_hz")),
             "only used with color = \"band\"");
    r.number("low_corner_hz", a.low_corner_hz, 0.01, 1000);
    r.number("site_coherence", a.site_coherence, 0, 1);
  }
  if (auto* t = section("breath")) {
    Reader r(*t, key_path + ".breath", file,
             {"enabled", "level_db", "corner_hz", "slope_db_per_octave", "upper_hz", "expiration_db",
              "site_coherence"});
    auto& b = p.breath;
    b.enabled = r.enabled();
    r.number("level_db", b.level_db, kMinLevelDb, kMaxLevelDb);
    r.number("corner_hz", b.corner_hz, 10, 2000);
    r.number("slope_db_per_octave", b.slope_db_per_octave, -40, -1);
    r.number("upper_hz", b.upper_hz, 20, kMaxFrequencyHz);
    r.number("expiration_db", b.expiration_db, -40, 0);
    r.number("site_coherence", b.site_coherence, 0, 1);
    if (!(b.corner_hz < b.upper_hz))
      r.fail(*t, r.key("upper_hz"), fmt::format("{}", b.upper_hz),
             fmt::format("impossible band: must be above corner_hz = {}", b.corner_hz));
  }
  if (auto* t = section("friction")) {
    Reader r(*t, key_path + ".friction", file, {"enabled", "rate_per_min", "duration_ms", "level_db"});
    auto& f = p.friction;
    f.enabled = r.enabled();
    r.rate("rate_per_min", f.rate_per_min);
    r.range("duration_ms", f.duration_ms, 1, kMaxDurationMs, "ms");
    r.number("level_db", f.level_db, kMinLevelDb, kMaxLevelDb);
  }
  if (auto* t = section("motion")) {
    Reader r(*t, key_path + ".motion", file,
             {"enabled", "rate_per_min", "duration_ms", "level_db", "max_frequency_hz", "clip", "peak_fs"});
    auto& m = p.motion;
    m.enabled = r.enabled();
    r.rate("rate_per_min", m.rate_per_min);
    r.range("duration_ms", m.duration_ms, 10, kMaxDurationMs, "ms");
    r.number("level_db", m.level_db, kMinLevelDb, kMaxLevelDb);
    r.number("max_frequency_hz", m.max_frequency_hz, 1, 100);
    r.boolean("clip", m.clip);
    r.number("peak_fs", m.peak_fs, 0.01, 100);
    if (t->get("peak_fs") && !m.clip)
      r.fail(*t->get("peak_fs"), r.key("peak_fs"), fmt::format("{}", m.peak_fs), "only used with clip = true");
  }
  if (auto* t = section("hum")) {
    Reader r(*t, key_path + ".hum", file,
             {"enabled", "frequency_hz", "harmonics", "harmonic_step_db", "level_db", "drift", "drift_period_s"});
    auto& h = p.hum;
    h.enabled = r.enabled();
    if (const toml::node* n = t->get("frequency_hz")) {
      if (!n->is_number()) r.fail(*n, r.key("frequency_hz"), Reader::text_of(*n), "must be 50 or 60");
      h.frequency_hz = toml_number(*n);
      if (h.frequency_hz != 50 && h.frequency_hz != 60)
        r.fail(*n, r.key("frequency_hz"), Reader::text_of(*n), "must be 50 or 60");
    }
    r.integer("harmonics", h.harmonics, 0, 40);
    r.number("harmonic_step_db", h.harmonic_step_db, -40, 0);
    r.number("level_db", h.level_db, kMinLevelDb, kMaxLevelDb);
    r.number("drift", h.drift, 0, 0.95);
    r.number("drift_period_s", h.drift_period_s, 0.5, 3600);
  }
  if (auto* t = section("dropout")) {
    Reader r(*t, key_path + ".dropout", file, {"enabled", "rate_per_min", "duration_ms", "depth_db"});
    auto& d = p.dropout;
    d.enabled = r.enabled();
    r.rate("rate_per_min", d.rate_per_min);
    r.range("duration_ms", d.duration_ms, 10, kMaxDurationMs, "ms");
    r.number("depth_db", d.depth_db, -120, 0);
  }
  if (const toml::node* n = table.get("recording")) {
    std::vector<const toml::table*> items;
    if (const toml::array* a = n->as_array()) {
      for (std::size_t i = 0; i < a->size(); ++i) {
        const toml::table* t = (*a)[i].as_table();
        if (!t) top.fail((*a)[i], fmt::format("{}.recording[{}]", key_path, i), "", "must be a table");
        items.push_back(t);
      }
    } else {
      items.push_back(section("recording"));
    }
    if (items.size() > kMaxRecordings)
      top.fail(*n, key_path + ".recording", fmt::format("[{} tables]", items.size()),
               fmt::format("at most {} recordings per profile", kMaxRecordings));
    for (std::size_t i = 0; i < items.size(); ++i) {
      std::string k = n->is_array() ? fmt::format("{}.recording[{}]", key_path, i) : key_path + ".recording";
      Reader r(*items[i], k, file, {"enabled", "file", "level_db", "loop", "random_offset"});
      if (!r.enabled()) continue;
      RecordingNoise rec;
      parse_recording(*items[i], k, file, rec);
      p.recordings.push_back(std::move(rec));
    }
  }
  bool additive = p.sensor_white.enabled || p.ambient.enabled || p.breath.enabled || p.friction.enabled ||
                  p.motion.enabled || p.hum.enabled || !p.recordings.empty();
  if (!additive)
    top.fail(table, key_path, "",
             "no additive noise process enabled (sensor_white, ambient, breath, friction, motion, hum, "
             "recording); the SNR needs at least one");
  return p;
}

void validate_for_rate(const NoiseProfile& p, int sample_rate_hz, const std::string& key_path) {
  const double nyquist_hz = sample_rate_hz / 2.0;
  auto below = [&](const std::string& key, double value, double frequency_hz, const std::string& what) {
    if (frequency_hz >= nyquist_hz)
      throw InputError(fmt::format("{}.{} = {}: {} must be below the Nyquist frequency {} Hz of the {} Hz "
                                   "sample rate",
                                   key_path, key, value, what, nyquist_hz, sample_rate_hz));
  };
  if (p.ambient.enabled && p.ambient.color == NoiseColor::band)
    below("ambient.band_hz", p.ambient.band_hz.hi, p.ambient.band_hz.hi, "the upper band edge");
  if (p.ambient.enabled) below("ambient.low_corner_hz", p.ambient.low_corner_hz, p.ambient.low_corner_hz, "the corner");
  if (p.breath.enabled) below("breath.corner_hz", p.breath.corner_hz, p.breath.corner_hz, "the corner");
  if (p.hum.enabled)
    below("hum.harmonics", p.hum.harmonics, p.hum.frequency_hz * (p.hum.harmonics + 1),
          fmt::format("the highest harmonic ({} x {} Hz)", p.hum.harmonics + 1, p.hum.frequency_hz));
  if (p.motion.enabled) below("motion.max_frequency_hz", p.motion.max_frequency_hz, p.motion.max_frequency_hz, "the top frequency");
}

}  // namespace stethogen::noise
