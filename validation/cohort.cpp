#include "validation/cohort.hpp"

#include <atomic>
#include <cstdlib>
#include <exception>
#include <mutex>
#include <thread>

#include <fmt/format.h>

#include "core/error.hpp"
#include "generator/circulation/simulate.hpp"
#include "generator/pipeline.hpp"
#include "recipe/plan.hpp"
#include "recipe/recipe.hpp"

namespace stethogen::validation {
namespace fs = std::filesystem;

namespace {

bool holds_recipes(const fs::path& root) {
  std::error_code ec;
  return fs::is_regular_file(root / "validation" / "recipes" / kValidationRecipes.front(), ec);
}

// The nearest ancestor of start (itself included) that holds validation/recipes, or "".
fs::path search_upwards(fs::path start) {
  std::error_code ec;
  start = fs::weakly_canonical(start, ec);
  for (fs::path p = start; !p.empty(); p = p.parent_path()) {
    if (holds_recipes(p)) return p / "validation" / "recipes";
    if (p == p.parent_path()) break;
  }
  return {};
}

}  // namespace

fs::path locate_recipe_dir() {
  std::vector<std::string> searched;
  if (const char* env = std::getenv("STETHOGEN_SOURCE_DIR"); env && *env) {
    if (holds_recipes(env)) return fs::path(env) / "validation" / "recipes";
    searched.push_back(fmt::format("$STETHOGEN_SOURCE_DIR ({})", env));
  }
  std::error_code ec;
  const fs::path exe = fs::read_symlink("/proc/self/exe", ec);
  if (!ec) {
    if (fs::path found = search_upwards(exe.parent_path()); !found.empty()) return found;
    searched.push_back(fmt::format("the ancestors of the executable ({})", exe.parent_path().string()));
  }
  const fs::path cwd = fs::current_path(ec);
  if (!ec) {
    if (fs::path found = search_upwards(cwd); !found.empty()) return found;
    searched.push_back(fmt::format("the ancestors of the working directory ({})", cwd.string()));
  }
  throw RuntimeFailure(fmt::format(
      "validate: the validation recipes (validation/recipes/{}) were not found; searched {}. Run the binary from "
      "inside the source tree or set STETHOGEN_SOURCE_DIR to the repository root",
      kValidationRecipes.front(), fmt::join(searched, ", ")));
}

const std::vector<Run>& Cohort::of(const std::string& stem) const {
  for (std::size_t i = 0; i < names.size(); ++i)
    if (names[i] == stem) return runs[i];
  throw std::out_of_range("no validation recipe " + stem);
}

Cohort synthesize_cohort(const fs::path& dir, unsigned threads) {
  struct Job {
    std::size_t recipe;
    std::size_t slot;
    SubjectSpec subject;
  };
  Cohort cohort;
  std::vector<Job> jobs;
  for (const std::string& file : kValidationRecipes) {
    const recipe::Recipe r = recipe::load_recipe((dir / file).string());
    const std::uint64_t n = recipe::record_count(r);
    cohort.names.push_back(fs::path(file).stem().string());
    cohort.runs.emplace_back(n);
    for (std::uint64_t i = 0; i < n; ++i) jobs.push_back({cohort.names.size() - 1, i, recipe::plan_record(r, i)});
  }

  if (threads == 0) threads = std::max(1u, std::thread::hardware_concurrency());
  threads = std::min<unsigned>(threads, static_cast<unsigned>(jobs.size()));
  std::atomic<std::size_t> next{0};
  std::exception_ptr failure;
  std::mutex failure_mutex;
  auto work = [&] {
    for (std::size_t j; (j = next++) < jobs.size();) {
      try {
        Run& run = cohort.runs[jobs[j].recipe][jobs[j].slot];
        run.record = gen::synthesize_record(jobs[j].subject);
        run.circulation = gen::simulate_circulation(jobs[j].subject);
      } catch (...) {
        std::lock_guard lock(failure_mutex);
        if (!failure) failure = std::current_exception();
        next = jobs.size();
      }
    }
  };
  std::vector<std::thread> pool;
  for (unsigned t = 1; t < threads; ++t) pool.emplace_back(work);
  work();
  for (auto& t : pool) t.join();
  if (failure) std::rethrow_exception(failure);
  return cohort;
}

}  // namespace stethogen::validation
