// BundleReader::attribute_names (bundle/reader.hpp), for verify's schema check. Part of the
// HDF5 adapter; kept in its own file so the reader's main source stays as its author has it.
#include <hdf5.h>

#include "bundle/hdf5_io.hpp"
#include "bundle/reader_impl.hpp"

namespace stethogen::bundle {

std::vector<std::string> BundleReader::attribute_names(const std::string& path) const {
  std::lock_guard guard(h5::lock());
  const Impl& m = *impl_;
  if (path != "/" && !h5::exists(m.file, path)) return {};
  h5::Id object(h5::check(H5Oopen(m.file, path.c_str(), H5P_DEFAULT), m.path.string() + ": " + path));
  return h5::attr_names(object);
}

}  // namespace stethogen::bundle
