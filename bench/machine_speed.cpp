// A yardstick for comparing figures across machines: the benchmark's CPU times moved by 2.2x
// between two machines of the same kind, with no change to the code. OpenSSL's SHA-256 is a
// fixed workload outside this project, so its throughput scales the figures: a machine that
// hashes half as fast should make records about half as fast.
#include <algorithm>
#include <cstdint>
#include <fstream>
#include <string>
#include <vector>

#include <openssl/evp.h>

#include "bench/bench.hpp"

namespace stethogen::bench {

namespace {

std::string cpu_model() {
  std::ifstream in("/proc/cpuinfo");
  std::string line;
  while (std::getline(in, line))
    if (line.rfind("model name", 0) == 0) {
      const std::size_t colon = line.find(':');
      if (colon != std::string::npos) return line.substr(line.find_first_not_of(' ', colon + 1));
    }
  return "unknown CPU";
}

}  // namespace

MachineSpeed measure_machine_speed() {
  MachineSpeed m;
  m.cpu_model = cpu_model();
  constexpr std::size_t kBytes = 64u << 20;  // 64 MiB in 16 KiB calls, the size openssl speed reports last
  constexpr std::size_t kBlock = 16u << 10;
  const std::vector<unsigned char> block(kBlock, 0x5a);
  EVP_MD_CTX* ctx = EVP_MD_CTX_new();
  if (ctx == nullptr) return m;
  unsigned char digest[EVP_MAX_MD_SIZE];
  unsigned int digest_len = 0;
  double best = 0;
  for (int repeat = 0; repeat < 3; ++repeat) {  // best of three: the first may pay page faults
    const double t0 = thread_cpu_s();
    bool ok = EVP_DigestInit_ex(ctx, EVP_sha256(), nullptr) == 1;
    for (std::size_t done = 0; ok && done < kBytes; done += kBlock) ok = EVP_DigestUpdate(ctx, block.data(), kBlock) == 1;
    ok = ok && EVP_DigestFinal_ex(ctx, digest, &digest_len) == 1;
    const double cpu = thread_cpu_s() - t0;
    if (!ok || cpu <= 0) break;
    best = std::max(best, static_cast<double>(kBytes) / cpu / 1e6);
  }
  EVP_MD_CTX_free(ctx);
  m.sha256_mb_per_s = best;
  return m;
}

}  // namespace stethogen::bench
