#include "core/allocator.hpp"

#include <malloc.h>

namespace stethogen {

void keep_freed_memory_for_reuse() {
  // 32 MiB is the largest threshold glibc accepts (half its arena heap size); larger blocks
  // (records of several minutes) are still mapped and unmapped one by one.
  constexpr int kLargestPooledBytes = 32 << 20;
  // Both settings also switch off glibc's own threshold adjustment, which would otherwise
  // settle on trimming at twice the largest block freed so far.
  ::mallopt(M_MMAP_THRESHOLD, kLargestPooledBytes);
  ::mallopt(M_TRIM_THRESHOLD, 4 * kLargestPooledBytes);
}

}  // namespace stethogen
