// A child process timed from outside: wall clock and CPU time from wait4's rusage, peak RSS
// polled from /proc.
#include <spawn.h>
#include <sys/resource.h>
#include <sys/wait.h>

#include <algorithm>
#include <chrono>
#include <thread>
#include <fstream>
#include <string>
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
  // ru_maxrss would also count the benchmark's own memory (Linux keeps the high-water mark of
  // the memory the spawned child shared until exec), and a finished child's /proc entry no
  // longer has one, so the child's VmHWM (monotone) is polled while it runs.
  long hwm_kib = -1;
  for (;;) {
    siginfo_t info{};
    if (waitid(P_PID, static_cast<id_t>(pid), &info, WEXITED | WNOWAIT | WNOHANG) != 0)
      throw std::runtime_error("waitid failed for " + argv[0]);
    if (info.si_pid == pid) break;
    std::ifstream status_file("/proc/" + std::to_string(pid) + "/status");
    for (std::string line; std::getline(status_file, line);)
      if (line.rfind("VmHWM:", 0) == 0) hwm_kib = std::max(hwm_kib, std::stol(line.substr(6)));
    std::this_thread::sleep_for(std::chrono::milliseconds(5));
  }
  int status = 0;
  rusage usage{};
  if (wait4(pid, &status, 0, &usage) != pid) throw std::runtime_error("wait4 failed for " + argv[0]);
  ProcessRun out;
  out.wall_s = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  const auto seconds = [](const timeval& tv) { return static_cast<double>(tv.tv_sec) + 1e-6 * static_cast<double>(tv.tv_usec); };
  out.cpu_s = seconds(usage.ru_utime) + seconds(usage.ru_stime);
  out.max_rss_kib = hwm_kib >= 0 ? hwm_kib : usage.ru_maxrss;
  out.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : 128 + WTERMSIG(status);
  return out;
}

}  // namespace stethogen::bench
