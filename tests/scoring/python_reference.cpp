#include "python_reference.hpp"

#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <stdexcept>

#include <sys/wait.h>
#include <unistd.h>

namespace stethogen::test {

TempDir::TempDir() {
  std::string pattern = (std::filesystem::temp_directory_path() / "stethogen-scoring-XXXXXX").string();
  if (!mkdtemp(pattern.data())) throw std::runtime_error("cannot create a temporary directory");
  path_ = pattern;
}

TempDir::~TempDir() {
  std::error_code ec;
  std::filesystem::remove_all(path_, ec);
}

nlohmann::json run_python(const std::string& script, const nlohmann::json& input) {
  const char* python = std::getenv("STETHOGEN_PYTHON");
  TempDir dir;
  std::ofstream(dir.file("script.py")) << script;
  std::ofstream(dir.file("input.json")) << input.dump();
  std::string command = std::string(python ? python : "/usr/bin/python3") + " " + dir.file("script.py") + " < " +
                        dir.file("input.json") + " > " + dir.file("output.json");
  if (std::system(command.c_str()) != 0) throw std::runtime_error("reference script failed: " + command);
  std::ifstream out(dir.file("output.json"));
  return nlohmann::json::parse(out);
}

CommandResult run_stethogen(const std::string& arguments) {
  const char* binary = std::getenv("STETHOGEN_BINARY");
  if (!binary) throw std::runtime_error("STETHOGEN_BINARY is not set");
  TempDir dir;
  std::string command = std::string(binary) + " " + arguments + " > " + dir.file("out") + " 2> " + dir.file("err");
  int status = std::system(command.c_str());
  CommandResult r;
  r.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  std::stringstream out, err;
  out << std::ifstream(dir.file("out")).rdbuf();
  err << std::ifstream(dir.file("err")).rdbuf();
  r.out = out.str();
  r.err = err.str();
  return r;
}

}  // namespace stethogen::test
