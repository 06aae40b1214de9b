// The check vocabulary of the validation report: pass/fail decisions and the three output forms.
#include <catch2/catch.hpp>

#include <cmath>
#include <sstream>

#include "validation/check.hpp"
#include "validation/measures.hpp"
#include "validation/validate.hpp"

using namespace stethogen::validation;

namespace {

Criterion aortic() {
  // CHECK_VALUES.md, rest hemodynamics: aortic systolic 90-140 mmHg (catheterisation table, from memory).
  return {"rest hemodynamics", "aortic systolic pressure", "mmHg", "90-140", 90, 140, "catheterisation table", true};
}

std::size_t count_lines(const std::string& s) {
  std::size_t n = 0;
  std::istringstream in(s);
  for (std::string line; std::getline(in, line);) ++n;
  return n;
}

}  // namespace

TEST_CASE("a value outside the accepted range fails, inside passes", "[validation]") {
  CHECK(evaluate(aortic(), 115).pass);
  CHECK(evaluate(aortic(), 90).pass);   // bounds are inclusive
  CHECK(evaluate(aortic(), 140).pass);
  CHECK_FALSE(evaluate(aortic(), 89.9).pass);
  CHECK_FALSE(evaluate(aortic(), 180).pass);
  CHECK_FALSE(evaluate(aortic(), NAN).pass);
  CHECK_FALSE(evaluate(aortic(), INFINITY).pass);
  Criterion open_top = aortic();
  open_top.hi = kInf;
  CHECK(evaluate(open_top, 1e6).pass);
  CHECK(accepted_range(open_top) == ">= 90");
  CHECK(count_failures({evaluate(aortic(), 115), evaluate(aortic(), 10), evaluate(aortic(), NAN)}) == 2);
}

TEST_CASE("table, Markdown and CSV list every check with its verdict and source", "[validation]") {
  Criterion other = aortic();
  other.group = "signal";
  other.quantity = "share, with a comma";
  other.from_memory = false;
  const std::vector<CheckResult> results = {evaluate(aortic(), 115), evaluate(aortic(), 10), evaluate(other, 100)};
  const std::string table = format_table(results), md = format_markdown_table(results), csv = format_csv(results);
  CHECK(table.find("FAIL") != std::string::npos);
  CHECK(table.find("catheterisation table (from memory)") != std::string::npos);
  CHECK(md.find("**FAIL**") != std::string::npos);
  CHECK(md.find("### signal") != std::string::npos);
  // One header plus one line per check.
  CHECK(count_lines(csv) == 1 + results.size());
  CHECK(csv.find("\"share, with a comma\"") != std::string::npos);
  CHECK(csv.find(",fail,") != std::string::npos);
  CHECK(csv.find(",pass,") != std::string::npos);
  const std::string report = format_report(results, false, "no python");
  CHECK(report.find("3 checks, 2 passed, 1 failed") != std::string::npos);
  CHECK(report.find("Figures were not drawn: no python") != std::string::npos);
}

TEST_CASE("measurement helpers: correlation and monotone steps", "[validation]") {
  // numpy.corrcoef([1, 2, 3, 4], [2, 4, 5, 9]) = 0.96476 (computed with numpy 1.24).
  CHECK(pearson({1, 2, 3, 4}, {2, 4, 5, 9}) == Approx(0.96476).epsilon(1e-4));
  CHECK(std::isnan(pearson({1, 2}, {3, 4})));
  CHECK(std::isnan(pearson({1, 1, 1}, {3, 4, 5})));
  CHECK(monotone_steps({1, 2, 2, 3}, +1) == 2);
  CHECK(monotone_steps({3, 2, 1}, -1) == 2);
}
