// `stethogen validate` end to end: every check passes except the listed model failures, and the report lists every check in the
// Markdown and the CSV (read back with Python's csv module).
#include <catch2/catch.hpp>

#include <cstdio>
#include <cstdlib>
#include <fstream>
#include <set>
#include <sstream>

#include "bundle/temp_dir.hpp"
#include "cli/command.hpp"
#include "validation/validate.hpp"

using namespace stethogen;

namespace {

int run_cli(std::vector<std::string> args) {
  args.insert(args.begin(), "stethogen");
  std::vector<const char*> argv;
  for (const auto& a : args) argv.push_back(a.c_str());
  return cli::run(static_cast<int>(argv.size()), argv.data());
}

std::string read_file(const std::filesystem::path& p) {
  std::ifstream in(p);
  std::stringstream s;
  s << in.rdbuf();
  return s.str();
}

// Output of a shell command.
std::string capture(const std::string& cmd) {
  std::string out;
  FILE* pipe = popen(cmd.c_str(), "r");
  REQUIRE(pipe);
  char buf[4096];
  while (std::size_t n = fread(buf, 1, sizeof buf, pipe)) out.append(buf, n);
  REQUIRE(pclose(pipe) == 0);
  return out;
}

// Checks that fail because of the model, not the measurement, as of this commit (reported to
// the engine and sounds owners; docs/validation.md, "Known failures"). Every other check must pass.
const std::set<std::string> kKnownModelFailures = {
    "RA mean pressure at severity 1",           // RV failure at severity 1 reaches ~10 mmHg, not > 14
    "M1 onset after LA-LV pressure crossover",  // LV exceeds LA at the end of the A wave, ~70 ms before M1
    "A2 onset after peak aortic flow deceleration",  // ~22 ms after, accepted +-15 ms
};

}  // namespace

TEST_CASE("validate passes its checks and writes a complete report", "[validation]") {
  test::TempDir tmp;
  const auto dir = tmp.path() / "report";
  const int rc = run_cli({"validate", "--report", dir.string(), "--threads", "2"});
  const std::string csv_path = (dir / "checks.csv").string();
  REQUIRE(std::filesystem::exists(csv_path));
  INFO(read_file(csv_path));

  // Python's csv module reads the CSV; every row has a verdict and appears in report.md.
  const std::string python = std::getenv("STETHOGEN_PYTHON");
  const std::string rows = capture(python + " -c \"import csv,sys; r=list(csv.DictReader(open(sys.argv[1]))); "
                                            "[print(x['quantity'] + '|' + x['pass']) for x in r]\" " + csv_path);
  const std::string md = read_file(dir / "report.md");
  std::istringstream in(rows);
  int n = 0, failed = 0;
  for (std::string line; std::getline(in, line); ++n) {
    const std::string quantity = line.substr(0, line.rfind('|')), verdict = line.substr(line.rfind('|') + 1);
    INFO(line);
    CHECK((verdict == "pass" || verdict == "fail"));
    CHECK(md.find("| " + quantity + " |") != std::string::npos);
    failed += verdict == "fail";
    if (kKnownModelFailures.count(quantity)) {
      if (verdict == "pass") WARN("known model failure now passes, remove it from the list: " << quantity);
    } else {
      CHECK(verdict == "pass");
    }
  }
  CHECK(n > 50);
  // Exit 0 only if every check passed, 1 if any failed.
  CHECK(rc == (failed ? cli::kExitRuntime : cli::kExitOk));
  // The figures, when matplotlib is there (it is on the project's machines).
  for (const std::string& f : validation::kFigureFiles) CHECK(std::filesystem::file_size(dir / f) > 10000);

  // An existing report is not overwritten without --force (refused before any work).
  CHECK(run_cli({"validate", "--report", dir.string()}) == cli::kExitUsage);
}

TEST_CASE("validate refuses bad usage", "[validation]") {
  CHECK(run_cli({"validate", "--threads", "0"}) == cli::kExitUsage);
  CHECK(run_cli({"validate", "--no-such-option"}) == cli::kExitUsage);
}

TEST_CASE("without a usable Python the tables are written and the report says why", "[validation]") {
  test::TempDir tmp;
  validation::ValidateOptions options;
  options.report_dir = tmp.path();
  options.threads = 2;
  options.python = (tmp.path() / "no-such-python").string();
  const validation::ValidateOutcome outcome = validation::run_validation(options);
  CHECK(outcome.figure_note.find("cannot import matplotlib") != std::string::npos);
  CHECK(std::filesystem::exists(tmp.path() / "checks.csv"));
  const std::string md = read_file(tmp.path() / "report.md");
  CHECK(md.find("Figures were not drawn") != std::string::npos);
  for (const std::string& f : validation::kFigureFiles) CHECK_FALSE(std::filesystem::exists(tmp.path() / f));
  // The same results whatever the thread count (records are pure functions of their subject).
  options.report_dir.reset();
  options.threads = 1;
  const validation::ValidateOutcome serial = validation::run_validation(options);
  REQUIRE(serial.results.size() == outcome.results.size());
  for (std::size_t i = 0; i < serial.results.size(); ++i) CHECK(serial.results[i].value == outcome.results[i].value);
}
