// One record end to end: rhythm -> circulation -> sources -> transmission -> noise ->
// sensor output -> truth. A pure function of the SubjectSpec.
#pragma once

#include "core/record.hpp"
#include "core/subject.hpp"

namespace stethogen::gen {

// Throws RecordFailure (naming the record, simulated time and parameters) if the record cannot
// be synthesised; InputError only for a SubjectSpec that validation should have refused.
Record synthesize_record(const SubjectSpec& subject);

}  // namespace stethogen::gen
