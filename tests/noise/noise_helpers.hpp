// Shared set-up for the noise tests: a subject with a profile, a clean signal, temp files and
// the reference Python (scipy) run on samples written to disk.
#pragma once

#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <map>
#include <memory>
#include <sstream>
#include <stdexcept>
#include <string>
#include <vector>

#include <unistd.h>

#include "core/subject.hpp"
#include "noise/mix.hpp"
#include "noise/profile.hpp"

namespace noise_test {

using namespace stethogen;

struct Case {
  SubjectSpec subject;
  SiteArray<float> clean;
  int rate_hz = 4000;

  noise::NoiseOutput run(std::function<double(double)> resp_phase = {}, double inspiration_fraction = 0.4) const {
    noise::NoiseInputs in;
    in.subject = &subject;
    in.sample_rate_hz = rate_hz;
    in.clean = &clean;
    in.resp_phase = std::move(resp_phase);
    in.inspiration_fraction = inspiration_fraction;
    return noise::add_noise(in);
  }
};

// A clean signal of 37 Hz tone bursts (a stand-in for heart sounds) at every site.
inline Case make_case(const noise::NoiseProfile& profile, double snr_db, double duration_s, std::size_t n_sites = 1,
                      int rate_hz = 4000, std::uint64_t seed = 7) {
  Case c;
  c.rate_hz = rate_hz;
  c.subject.dataset_seed = seed;
  c.subject.record_index = 3;
  c.subject.record_id = "r000003";
  c.subject.sample_rate_hz = rate_hz;
  for (std::size_t s = 0; s < n_sites; ++s) c.subject.sites.push_back(kAllSites[s]);
  c.subject.params.snr_db = snr_db;
  c.subject.noise_profile_name = "test";
  c.subject.noise_profile = std::make_shared<const noise::NoiseProfile>(profile);
  auto n = static_cast<std::size_t>(duration_s * rate_hz);
  c.clean = SiteArray<float>(n_sites, n);
  for (std::size_t s = 0; s < n_sites; ++s)
    for (std::size_t i = 0; i < n; ++i) {
      double t = static_cast<double>(i) / rate_hz;
      double gate = std::fmod(t, 0.8) < 0.1 ? 1.0 : 0.05;
      c.clean.at(s, i) = static_cast<float>(0.1 * (1 + 0.1 * s) * gate * std::sin(2 * M_PI * 37 * t));
    }
  return c;
}

// noisy - clean at one site: the noise as a user of the bundle would measure it.
inline std::vector<float> noise_at(const noise::NoiseOutput& out, const SiteArray<float>& clean, std::size_t site) {
  std::vector<float> x(clean.n_samples);
  for (std::size_t i = 0; i < x.size(); ++i) x[i] = out.noisy.at(site, i) - clean.at(site, i);
  return x;
}

class TempDir {
 public:
  TempDir() {
    path_ = std::filesystem::temp_directory_path() /
            ("stethogen-noise-test-" + std::to_string(::getpid()) + "-" + std::to_string(counter()++));
    std::filesystem::create_directories(path_);
  }
  ~TempDir() {
    std::error_code ec;
    std::filesystem::remove_all(path_, ec);
  }
  std::string file(const std::string& name) const { return (path_ / name).string(); }

 private:
  static int& counter() {
    static int c = 0;
    return c;
  }
  std::filesystem::path path_;
};

// Little-endian float32, what numpy.fromfile(dtype="<f4") reads.
inline void write_f32(const std::string& path, const std::vector<float>& x) {
  std::ofstream f(path, std::ios::binary);
  f.write(reinterpret_cast<const char*>(x.data()), static_cast<std::streamsize>(x.size() * sizeof(float)));
}

// Runs tests/noise/noise_reference.py under the reference Python; returns its "key value" lines.
inline std::map<std::string, double> reference(const std::string& args) {
  const char* py = std::getenv("STETHOGEN_PYTHON");
  const char* src = std::getenv("STETHOGEN_SOURCE_DIR");
  if (!src) throw std::runtime_error("STETHOGEN_SOURCE_DIR is not set (ctest sets it; export it to run by hand)");
  std::string script = std::string(src) + "/tests/noise/noise_reference.py";
  std::string cmd = std::string(py ? py : "/usr/bin/python3") + " " + script + " " + args + " 2>&1";
  std::unique_ptr<FILE, int (*)(FILE*)> pipe(popen(cmd.c_str(), "r"), pclose);
  if (!pipe) throw std::runtime_error("cannot run " + cmd);
  std::string text;
  char buf[4096];
  while (std::size_t got = fread(buf, 1, sizeof buf, pipe.get())) text.append(buf, got);
  std::map<std::string, double> values;
  std::istringstream lines(text);
  std::string key;
  double value;
  while (lines >> key >> value) values[key] = value;
  if (values.empty()) throw std::runtime_error("reference script gave no values: " + cmd + "\n" + text);
  return values;
}

}  // namespace noise_test
