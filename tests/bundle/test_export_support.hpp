// Shared helpers of the inspect/verify/export tests: scratch folders, running the reference
// Python (/usr/bin/python3 with numpy, h5py, soundfile) and small hand-built records.
#pragma once

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <string>
#include <vector>

#include "core/record.hpp"

namespace stethogen::test {

// A fresh folder under the system temp folder, removed with everything in it on destruction.
class ScratchDir {
 public:
  explicit ScratchDir(const std::string& tag);
  ~ScratchDir();
  const std::filesystem::path& path() const { return path_; }
  std::filesystem::path operator/(const std::string& name) const { return path_ / name; }

 private:
  std::filesystem::path path_;
};

// The value of an environment variable set by CTest (STETHOGEN_PYTHON, ...), or fallback.
std::string env_or(const char* name, const std::string& fallback);

struct ProcessResult {
  int exit_code = -1;
  std::string output;  // stdout and stderr
};

// Runs a shell command line, capturing its output.
ProcessResult run_command(const std::string& command_line);
// Writes script to dir/name and runs it with the reference Python and the given arguments.
ProcessResult run_python(const ScratchDir& dir, const std::string& name, const std::string& script,
                         const std::vector<std::string>& args);
// A shell-quoted argument.
std::string shell_quote(const std::string& s);

// A tiny recipe for end-to-end tests: 4 records of 3 s at 2000 Hz, 2 sites, two populations
// (rest and LV failure), with noise. extra_noise is appended to the noise profile's table.
std::string tiny_recipe(const std::string& extra_noise = "");

// Runs `stethogen ARGS` (the binary under test, env STETHOGEN_BINARY).
ProcessResult run_stethogen(const std::vector<std::string>& args);

// Writes recipe text to dir/name.toml and generates dir/name.h5; the result of generate.
ProcessResult generate_bundle(const ScratchDir& dir, const std::string& name, const std::string& recipe_text);

// The tiny bundle, generated once per test process (read-only: copy it before modifying).
const std::filesystem::path& shared_tiny_bundle();

// Writes floats as raw little-endian float32 (numpy.fromfile(path, '<f4') reads them).
void write_raw_f32(const std::filesystem::path& path, const std::vector<float>& values);

// A small record with every part filled (deterministic from index): a few seconds at rate_hz,
// `sites` sites, tones plus noise in pcg, label runs in states, events, beats and artifacts.
Record make_test_record(std::uint64_t index, int rate_hz = 2000, double duration_s = 2.0,
                        std::vector<Site> sites = {Site::aortic, Site::mitral});

}  // namespace stethogen::test
