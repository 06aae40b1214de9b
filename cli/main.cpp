// The executable only dispatches; every verb lives in the stethogen::cli library.
#include "cli/command.hpp"

int main(int argc, char** argv) { return stethogen::cli::run(argc, argv); }
