// Runs tests/generator/reference/signal_reference.py under the reference Python
// (STETHOGEN_PYTHON, scipy and numpy installed) and returns its printed numbers.
#pragma once

#include <cstdio>
#include <cstdlib>
#include <unistd.h>
#include <fstream>
#include <stdexcept>
#include <string>
#include <vector>

#include "generator/transmission/biquad.hpp"

namespace stethogen::test {

inline std::string env_or(const char* name, const char* fallback) {
  const char* v = std::getenv(name);
  return v ? v : fallback;
}

inline std::string temp_path(const std::string& stem) {
  return "/tmp/stethogen_test_generator_" + stem + "_" + std::to_string(::getpid());
}

// Runs the reference script with the given arguments; one number per output line.
inline std::vector<double> run_reference(const std::string& args) {
  std::string cmd = env_or("STETHOGEN_PYTHON", "/usr/bin/python3") + " " +
                    env_or("STETHOGEN_SOURCE_DIR", ".") + "/tests/generator/reference/signal_reference.py " + args;
  FILE* pipe = popen(cmd.c_str(), "r");
  if (!pipe) throw std::runtime_error("cannot run " + cmd);
  std::vector<double> out;
  char line[256];
  while (std::fgets(line, sizeof line, pipe)) {
    std::string s(line);
    std::size_t pos = 0;
    while (pos < s.size()) {
      std::size_t used = 0;
      try {
        out.push_back(std::stod(s.substr(pos), &used));
      } catch (...) {
        break;
      }
      pos += used;
    }
  }
  if (pclose(pipe) != 0) throw std::runtime_error("reference script failed: " + cmd);
  return out;
}

inline std::string write_samples(const std::string& stem, const std::vector<double>& x) {
  std::string path = temp_path(stem);
  std::ofstream f(path, std::ios::binary);
  f.write(reinterpret_cast<const char*>(x.data()), static_cast<std::streamsize>(x.size() * sizeof(double)));
  return path;
}

inline std::string write_cascade(const std::string& stem, const gen::FilterCascade& c) {
  std::string path = temp_path(stem);
  std::ofstream f(path);
  f.precision(17);
  f << "gain " << c.gain << "\n";
  for (const gen::Biquad& s : c.sections) f << s.b0 << " " << s.b1 << " " << s.b2 << " " << s.a1 << " " << s.a2 << "\n";
  return path;
}

}  // namespace stethogen::test
