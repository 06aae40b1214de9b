// The executable only dispatches; every verb lives in the stethogen::cli library.
#include "cli/command.hpp"
#include "core/allocator.hpp"

int main(int argc, char** argv) {
  stethogen::keep_freed_memory_for_reuse();
  return stethogen::cli::run(argc, argv);
}
