#include "validation/check.hpp"

#include <algorithm>
#include <cmath>
#include <sstream>

#include <fmt/format.h>

namespace stethogen::validation {

CheckResult evaluate(const Criterion& criterion, double value) {
  CheckResult r;
  r.criterion = criterion;
  r.value = value;
  r.pass = std::isfinite(value) && value >= criterion.lo && value <= criterion.hi;
  return r;
}

std::string format_value(double value) {
  if (std::isnan(value)) return "nan";
  if (std::isinf(value)) return value > 0 ? "inf" : "-inf";
  const double a = std::abs(value);
  if (a >= 100 || a == std::floor(a)) return fmt::format("{:.0f}", value);
  if (a >= 10) return fmt::format("{:.1f}", value);
  if (a >= 1) return fmt::format("{:.2f}", value);
  return fmt::format("{:.3f}", value);
}

std::string accepted_range(const Criterion& c) {
  const bool has_lo = std::isfinite(c.lo), has_hi = std::isfinite(c.hi);
  if (has_lo && has_hi) return fmt::format("[{}, {}]", format_value(c.lo), format_value(c.hi));
  if (has_hi) return "<= " + format_value(c.hi);
  if (has_lo) return ">= " + format_value(c.lo);
  return "any";
}

std::string source_text(const Criterion& c) { return c.from_memory ? c.source + " (from memory)" : c.source; }

std::size_t count_failures(const std::vector<CheckResult>& results) {
  return static_cast<std::size_t>(std::count_if(results.begin(), results.end(), [](auto& r) { return !r.pass; }));
}

namespace {

std::string with_unit(const std::string& text, const std::string& unit) {
  return unit.empty() ? text : text + " " + unit;
}

// CSV field quoting (RFC 4180): quote when the field holds a comma, quote or newline.
std::string csv_field(const std::string& s) {
  if (s.find_first_of(",\"\n") == std::string::npos) return s;
  std::string out = "\"";
  for (char ch : s) out += ch == '"' ? std::string("\"\"") : std::string(1, ch);
  return out + "\"";
}

std::string md_cell(const std::string& s) {
  std::string out;
  for (char ch : s) out += ch == '|' ? std::string("\\|") : std::string(1, ch);
  return out;
}

}  // namespace

std::string format_table(const std::vector<CheckResult>& results) {
  std::size_t wq = 8, wp = 9, wa = 8, wv = 9;
  for (const auto& r : results) {
    wq = std::max(wq, r.criterion.quantity.size());
    wp = std::max(wp, with_unit(r.criterion.published, r.criterion.unit).size());
    wa = std::max(wa, accepted_range(r.criterion).size());
    wv = std::max(wv, format_value(r.value).size());
  }
  std::ostringstream out;
  out << fmt::format("{:<{}}  {:<{}}  {:<{}}  {:>{}}  {:<4}  {}\n", "quantity", wq, "published", wp, "accepted", wa,
                     "simulated", wv, "pass", "source");
  std::string group;
  for (const auto& r : results) {
    if (r.criterion.group != group) {
      group = r.criterion.group;
      out << "-- " << group << "\n";
    }
    out << fmt::format("{:<{}}  {:<{}}  {:<{}}  {:>{}}  {:<4}  {}\n", r.criterion.quantity, wq,
                       with_unit(r.criterion.published, r.criterion.unit), wp, accepted_range(r.criterion), wa,
                       format_value(r.value), wv, r.pass ? "pass" : "FAIL", source_text(r.criterion));
  }
  return out.str();
}

std::string format_markdown_table(const std::vector<CheckResult>& results) {
  std::ostringstream out;
  std::string group;
  for (const auto& r : results) {
    if (r.criterion.group != group) {
      group = r.criterion.group;
      out << "\n### " << group << "\n\n"
          << "| quantity | published | accepted | simulated | result | source |\n"
          << "|---|---|---|---|---|---|\n";
    }
    const Criterion& c = r.criterion;
    out << fmt::format("| {} | {} | {} | {} | {} | {} |\n", md_cell(c.quantity), md_cell(with_unit(c.published, c.unit)),
                       md_cell(accepted_range(c)), format_value(r.value), r.pass ? "pass" : "**FAIL**",
                       md_cell(source_text(c)));
  }
  return out.str();
}

std::string format_csv(const std::vector<CheckResult>& results) {
  std::ostringstream out;
  out << "group,quantity,unit,published,accepted_lo,accepted_hi,simulated,pass,source,from_memory\n";
  for (const auto& r : results) {
    const Criterion& c = r.criterion;
    out << fmt::format("{},{},{},{},{},{},{},{},{},{}\n", csv_field(c.group), csv_field(c.quantity), csv_field(c.unit),
                       csv_field(c.published), format_value(c.lo), format_value(c.hi), fmt::format("{:.6g}", r.value),
                       r.pass ? "pass" : "fail", csv_field(c.source), c.from_memory ? 1 : 0);
  }
  return out.str();
}

}  // namespace stethogen::validation
