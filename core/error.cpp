#include "core/error.hpp"

#include <fmt/format.h>

namespace stethogen {

std::string SourceLocation::str() const {
  if (file.empty() && line == 0) return {};
  if (line == 0) return file;
  return fmt::format("{}:{}:{}", file, line, column);
}

InputError::InputError(const SourceLocation& where, const std::string& key_path,
                       const std::string& message)
    : std::runtime_error([&] {
        std::string text = where.str();
        if (!text.empty()) text += ": ";
        if (!key_path.empty()) text += key_path + ": ";
        return text + message;
      }()) {}

}  // namespace stethogen
