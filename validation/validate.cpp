#include "validation/validate.hpp"

#include <cstdlib>

#include <fmt/format.h>

#include "bundle/export_files.hpp"
#include "core/error.hpp"
#include "validation/checks.hpp"

namespace stethogen::validation {
namespace fs = std::filesystem;

namespace {

std::string shell_quote(const std::string& s) {
  std::string out = "'";
  for (char ch : s) out += ch == '\'' ? std::string("'\\''") : std::string(1, ch);
  return out + "'";
}

void write_text(const fs::path& path, const std::string& text) {
  bundle::StagedTextFile file(path);
  file.stream() << text;
  file.close();
}

// Draws the figures with validation/figures.py; returns "" on success, else why not.
std::string draw_figures(const std::string& python, const fs::path& script, const fs::path& dir) {
  if (!fs::is_regular_file(script)) return fmt::format("the figure script {} is missing", script.string());
  const std::string probe = shell_quote(python) + " -c 'import matplotlib, numpy, scipy' > /dev/null 2>&1";
  if (std::system(probe.c_str()) != 0)
    return fmt::format("{} cannot import matplotlib, numpy and scipy (install python3-matplotlib and python3-scipy)",
                       python);
  const std::string cmd = fmt::format("{} {} {} {}", shell_quote(python), shell_quote(script.string()),
                                      shell_quote((dir / "figure_data.json").string()), shell_quote(dir.string()));
  if (const int rc = std::system(cmd.c_str()); rc != 0)
    return fmt::format("{} exited with status {} (its messages are above)", script.string(), rc);
  return {};
}

}  // namespace

ValidateOutcome run_validation(const ValidateOptions& options) {
  const fs::path recipes = locate_recipe_dir();
  if (options.report_dir) {
    std::vector<fs::path> targets;
    for (const auto& list : {kReportTables, kFigureFiles})
      for (const std::string& f : list) targets.push_back(*options.report_dir / f);
    bundle::check_not_overwriting(targets, options.force);
  }
  const Cohort cohort = synthesize_cohort(recipes, options.threads);
  ValidateOutcome outcome;
  outcome.results = all_checks(cohort);
  if (!options.report_dir) return outcome;

  const fs::path& dir = *options.report_dir;
  std::error_code ec;
  fs::create_directories(dir, ec);
  if (ec) throw RuntimeFailure(fmt::format("--report {}: cannot create the folder: {}", dir.string(), ec.message()));
  write_text(dir / "checks.csv", format_csv(outcome.results));
  write_text(dir / "figure_data.json", figure_data_json(cohort));
  outcome.report_files = {"checks.csv", "figure_data.json"};
  outcome.figure_note = draw_figures(options.python, recipes.parent_path() / "figures.py", dir);
  if (outcome.figure_note.empty())
    outcome.report_files.insert(outcome.report_files.end(), kFigureFiles.begin(), kFigureFiles.end());
  write_text(dir / "report.md", format_report(outcome.results, outcome.figure_note.empty(), outcome.figure_note));
  outcome.report_files.insert(outcome.report_files.begin(), "report.md");
  return outcome;
}

}  // namespace stethogen::validation
