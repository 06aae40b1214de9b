// One row of the validation report: a simulated quantity against its published value or range.
// A check passes when its value is finite and lies in [lo, hi] (either bound may be infinite).
#pragma once

#include <limits>
#include <string>
#include <vector>

namespace stethogen::validation {

inline constexpr double kInf = std::numeric_limits<double>::infinity();

// What the simulated value must meet, and where that comes from.
struct Criterion {
  std::string group;      // report section, e.g. "rest hemodynamics"
  std::string quantity;   // e.g. "aortic systolic pressure"
  std::string unit;       // of the value, e.g. "mmHg"; "" for ratios and counts
  std::string published;  // the value as published, e.g. "90-140"
  double lo = -kInf;      // accepted range (published range widened by the stated tolerance)
  double hi = kInf;
  std::string source;       // authors, year, journal; or "common practice"
  bool from_memory = false;  // the published value is recalled, not checked against the text
};

struct CheckResult {
  Criterion criterion;
  double value = std::numeric_limits<double>::quiet_NaN();
  bool pass = false;
};

// Evaluates one criterion; NaN or infinite values fail.
CheckResult evaluate(const Criterion& criterion, double value);

// "[lo, hi]", "<= hi", ">= lo": the accepted range as text.
std::string accepted_range(const Criterion& criterion);
// The source column: the source, with " (from memory)" where it applies.
std::string source_text(const Criterion& criterion);
// The value with a precision suited to its magnitude.
std::string format_value(double value);

std::size_t count_failures(const std::vector<CheckResult>& results);

// Plain-text table for the terminal, one row per check.
std::string format_table(const std::vector<CheckResult>& results);
// The same as a Markdown table (one section per group) and as CSV with a header.
std::string format_markdown_table(const std::vector<CheckResult>& results);
std::string format_csv(const std::vector<CheckResult>& results);

}  // namespace stethogen::validation
