// A real single-node Slurm runs a 3-task job array of generate; merged shards equal a single run.
#include <catch2/catch.hpp>

#include "run_helpers.hpp"

using namespace stethogen::test;

TEST_CASE("a Slurm job array of three shards merges to the single-run bundle", "[generate][slurm]") {
  RunResult r = run("bash " + quote(source_dir() / "tests/bundle/slurm_array.sh") + " " + quote(binary()) + " " +
                    quote(small_recipe()) + " " + quote(source_dir() / "tests/bundle/compare_bundles.py") + " " +
                    quote(python()));
  if (r.exit_code == 77) {
    WARN("skipped: Slurm or munge is not installed (" << r.output << "); scripts/setup.sh installs them");
    return;
  }
  INFO(r.output);
  REQUIRE(r.exit_code == 0);
  REQUIRE(r.output.find("merged 3-task array equals a single run") != std::string::npos);
}
