#include "core/allocator.hpp"

#include <malloc.h>

namespace stethogen {

void configure_allocator() {
  // 32 MiB is the largest threshold glibc accepts (half its arena heap size); larger blocks
  // (records of several minutes) are still mapped and unmapped one by one.
  constexpr int kLargestPooledBytes = 32 << 20;
  // Both settings also switch off glibc's own threshold adjustment, which would otherwise
  // settle on trimming at twice the largest block freed so far.
  ::mallopt(M_MMAP_THRESHOLD, kLargestPooledBytes);
  ::mallopt(M_TRIM_THRESHOLD, 4 * kLargestPooledBytes);
  // One arena for all threads: a record's buffers are freed on another thread (the writer) than
  // the worker that made them, and per-thread arenas then fragment, so peak memory crept up with
  // the record count (generate --threads 2, 5 s records: 36.2 / 37.4 / 40.9 MiB at 100 / 1000 /
  // 3000 records; one arena: 36.3 / 36.1 / 37.0, the same CPU at 1 and 2 threads). Not measured
  // beyond 2 threads, where the shared arena lock could start to cost.
  ::mallopt(M_ARENA_MAX, 1);
}

}  // namespace stethogen
