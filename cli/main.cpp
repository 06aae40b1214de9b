// The executable only dispatches; every verb lives in the stethogen::cli library.
#include "cli/command.hpp"
#include "core/allocator.hpp"

int main(int argc, char** argv) {
  stethogen::configure_allocator();
  return stethogen::cli::run(argc, argv);
}
