// A child process timed from outside: wall clock, CPU time and peak RSS from wait4's rusage.
#include <spawn.h>
#include <sys/resource.h>
#include <sys/wait.h>

#include <chrono>
#include <stdexcept>

#include "bench/bench.hpp"

extern char** environ;

namespace stethogen::bench {

ProcessRun run_process(const std::vector<std::string>& argv) {
  std::vector<char*> args;
  for (const std::string& a : argv) args.push_back(const_cast<char*>(a.c_str()));
  args.push_back(nullptr);
  const auto start = std::chrono::steady_clock::now();
  pid_t pid = 0;
  if (posix_spawn(&pid, args[0], nullptr, nullptr, args.data(), environ) != 0)
    throw std::runtime_error("cannot start " + argv[0]);
  int status = 0;
  rusage usage{};
  if (wait4(pid, &status, 0, &usage) != pid) throw std::runtime_error("wait4 failed for " + argv[0]);
  ProcessRun out;
  out.wall_s = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  const auto seconds = [](const timeval& tv) { return static_cast<double>(tv.tv_sec) + 1e-6 * static_cast<double>(tv.tv_usec); };
  out.cpu_s = seconds(usage.ru_utime) + seconds(usage.ru_stime);
  out.max_rss_kib = usage.ru_maxrss;
  out.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : 128 + WTERMSIG(status);
  return out;
}

}  // namespace stethogen::bench
