// Running the built binary and the reference Python from bundle tests.
#pragma once

#include <sys/wait.h>

#include <array>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>

namespace stethogen::test {

inline std::string env_or(const char* key, const char* fallback) {
  const char* v = std::getenv(key);
  return v && *v ? v : fallback;
}
inline std::string binary() { return env_or("STETHOGEN_BINARY", "stethogen"); }
inline std::string python() { return env_or("STETHOGEN_PYTHON", "/usr/bin/python3"); }
inline std::filesystem::path source_dir() { return env_or("STETHOGEN_SOURCE_DIR", "."); }
inline std::filesystem::path small_recipe() { return source_dir() / "tests/bundle/data/harbour_small.toml"; }

struct RunResult {
  int exit_code = -1;
  std::string output;  // stdout and stderr
};

// Runs a shell command line (bash), capturing its output. SOURCE_DATE_EPOCH pins created_utc so
// bundles of separate runs compare byte for byte.
inline RunResult run(const std::string& command) {
  RunResult r;
  std::string full = "SOURCE_DATE_EPOCH=1700000000 bash -c '" + command + "' 2>&1";
  FILE* pipe = popen(full.c_str(), "r");
  if (!pipe) return r;
  std::array<char, 4096> buf{};
  while (std::size_t n = fread(buf.data(), 1, buf.size(), pipe)) r.output.append(buf.data(), n);
  int status = pclose(pipe);
  r.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  return r;
}

inline std::string quote(const std::filesystem::path& p) { return "\"" + p.string() + "\""; }

inline std::string generate_cmd(const std::filesystem::path& recipe, const std::filesystem::path& out,
                                const std::string& extra = "") {
  return binary() + " generate " + quote(recipe) + " -o " + quote(out) + " --quiet " + extra;
}

inline std::string read_bytes(const std::filesystem::path& p) {
  std::ifstream in(p, std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

}  // namespace stethogen::test
