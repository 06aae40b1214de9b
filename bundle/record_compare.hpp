// Bit-for-bit comparison of two records as read from bundles, naming the dataset and the first
// differing element. Floating-point values compare by their bits (NaN equals NaN, 0 != -0).
#pragma once

#include <string>
#include <vector>

#include "bundle/index_row.hpp"
#include "core/record.hpp"

namespace stethogen::bundle {

struct RecordDifference {
  std::string dataset;  // "/records/<id>/pcg", "/index", ...
  std::string message;  // where and how it differs
};

// Compares the parts present in both records (as selected by parts) and the index rows.
std::vector<RecordDifference> compare_records(const std::string& record_id, const Record& stored,
                                              const Record& regenerated, const RecordParts& parts);
std::vector<RecordDifference> compare_index_rows(const IndexRow& stored, const IndexRow& regenerated);

}  // namespace stethogen::bundle
