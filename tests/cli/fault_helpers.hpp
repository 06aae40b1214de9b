// Shared by the fault tests: run the stethogen binary (STETHOGEN_BINARY) with output captured,
// fingerprint files and directories so a test can tell that nothing already written was lost,
// and make a directory read-only in a way that holds for root too.
#pragma once

#include <sys/wait.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <map>
#include <optional>
#include <sstream>
#include <string>
#include <vector>

#include <fmt/format.h>

namespace stethogen::test {

struct RunResult {
  int exit_code = -1;     // -1 when killed by a signal
  int signal = 0;         // the signal that ended it, 0 if it exited
  std::string output;     // stdout and stderr
};

inline std::string shell_quote(const std::string& s) {
  std::string out = "'";
  for (char c : s) out += c == '\'' ? std::string("'\\''") : std::string(1, c);
  return out + "'";
}

inline std::string read_text(const std::filesystem::path& p) {
  std::ifstream in(p, std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

// Runs `stethogen ARGS...` in dir, stdin from /dev/null.
inline RunResult run_stethogen(const std::filesystem::path& dir, const std::vector<std::string>& args) {
  const std::filesystem::path log = dir / ".run-output.txt";
  std::string cmd = "cd " + shell_quote(dir.string()) + " && " + shell_quote(std::getenv("STETHOGEN_BINARY"));
  for (const std::string& a : args) cmd += " " + shell_quote(a);
  cmd += " </dev/null >" + shell_quote(log.string()) + " 2>&1";
  const int status = std::system(cmd.c_str());
  RunResult r;
  r.output = read_text(log);
  std::filesystem::remove(log);
  // std::system runs /bin/sh, which reports a child killed by signal N as exit 128 + N.
  if (WIFEXITED(status)) {
    r.exit_code = WEXITSTATUS(status);
    if (r.exit_code > 128) {
      r.signal = r.exit_code - 128;
      r.exit_code = -1;
    }
  } else if (WIFSIGNALED(status)) {
    r.signal = WTERMSIG(status);
  }
  return r;
}

// Path -> contents of every regular file under dir (the run output log excluded).
inline std::map<std::string, std::string> snapshot(const std::filesystem::path& dir) {
  std::map<std::string, std::string> files;
  for (const auto& e : std::filesystem::recursive_directory_iterator(dir))
    if (e.is_regular_file() && e.path().filename() != ".run-output.txt")
      files[std::filesystem::relative(e.path(), dir).string()] = read_text(e.path());
  return files;
}

inline bool run_ok(const std::string& cmd) { return std::system((cmd + " >/dev/null 2>&1").c_str()) == 0; }

// Makes dir read-only for everyone, root included: a read-only bind mount of it onto itself, or
// else the immutable attribute on it and its files. Undone on destruction. ok() is false when
// neither works here (no mount rights, a file system without chattr); callers then skip.
class ReadOnlyDir {
 public:
  explicit ReadOnlyDir(std::filesystem::path dir) : dir_(std::move(dir)) {
    const std::string q = shell_quote(dir_.string());
    if (run_ok("mount --bind " + q + " " + q)) {
      if (run_ok("mount -o remount,bind,ro " + q + " " + q) && !writable()) {
        how_ = "read-only bind mount";
        return;
      }
      run_ok("umount " + q);
    }
    if (run_ok("chattr -R +i " + q) && !writable()) {
      how_ = "immutable attribute";
      return;
    }
    run_ok("chattr -R -i " + q);
  }
  ~ReadOnlyDir() {
    const std::string q = shell_quote(dir_.string());
    if (how_ == "read-only bind mount") run_ok("umount " + q);
    if (how_ == "immutable attribute") run_ok("chattr -R -i " + q);
  }
  ReadOnlyDir(const ReadOnlyDir&) = delete;
  ReadOnlyDir& operator=(const ReadOnlyDir&) = delete;
  bool ok() const { return !how_.empty(); }
  const std::string& how() const { return how_; }

 private:
  bool writable() const {
    const std::filesystem::path probe = dir_ / ".write-probe";
    std::ofstream out(probe);
    const bool wrote = static_cast<bool>(out << "x") && out.flush();
    out.close();
    std::error_code ec;
    std::filesystem::remove(probe, ec);
    return wrote && !ec;
  }
  std::filesystem::path dir_;
  std::string how_;
};

}  // namespace stethogen::test
