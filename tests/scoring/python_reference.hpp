// Runs a reference script under the Python that has scipy/numpy/mir_eval (env STETHOGEN_PYTHON):
// the input goes to the script as JSON on stdin, its JSON on stdout comes back.
#pragma once

#include <string>

#include <nlohmann/json.hpp>

namespace stethogen::test {

nlohmann::json run_python(const std::string& script, const nlohmann::json& input);

// Runs the stethogen binary (env STETHOGEN_BINARY) with arguments; captures both streams.
struct CommandResult {
  int exit_code = -1;
  std::string out, err;
};
CommandResult run_stethogen(const std::string& arguments);

// A fresh empty directory under the system temporary directory, removed by the destructor.
class TempDir {
 public:
  TempDir();
  ~TempDir();
  const std::string& path() const { return path_; }
  std::string file(const std::string& name) const { return path_ + "/" + name; }

 private:
  std::string path_;
};

}  // namespace stethogen::test
