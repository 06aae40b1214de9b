#pragma once

namespace stethogen {

// Keeps freed memory in the process for the next record instead of handing it back to the
// kernel. Every record allocates the same large buffers (the engine's series alone is about
// 10 MB for 30 s); by default glibc returns them on free, and the next record pays the kernel
// for zeroing the pages again (10-12 % of the engine's CPU, measured). Peak memory is unchanged:
// what is kept is what the previous record used. Also one malloc arena for all threads, so
// memory stays flat however many records a run makes. Call once at program start.
void configure_allocator();

}  // namespace stethogen
