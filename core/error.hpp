// Three error tiers (see DEVELOPERS.md): programmer bugs are assertions; user input errors
// are InputError (exit 2); runtime failures are RuntimeFailure (exit 1); one bad record is a
// RecordFailure that the generator reports without losing the rest of the dataset.
#pragma once

#include <cstdint>
#include <stdexcept>
#include <string>

namespace stethogen {

// Where in an input file a value came from; line/column are 1-based, 0 = unknown.
struct SourceLocation {
  std::string file;
  std::uint32_t line = 0;
  std::uint32_t column = 0;

  // "file:line:column", "file" or "" depending on what is known.
  std::string str() const;
};

// Bad user input (recipe, detections file, arguments, bundle from another program): exit 2.
class InputError : public std::runtime_error {
 public:
  explicit InputError(const std::string& message) : std::runtime_error(message) {}
  // Formats "file:line:column: key.path = value: what is allowed".
  InputError(const SourceLocation& where, const std::string& key_path, const std::string& message);
};

// The environment failed us (disk full, unreadable file, signal): exit 1.
class RuntimeFailure : public std::runtime_error {
 public:
  explicit RuntimeFailure(const std::string& message) : std::runtime_error(message) {}
};

// One record could not be synthesised (solver stall, non-finite state). Carries the record id
// so the generator can report it and stop or skip according to the recipe's policy.
class RecordFailure : public std::runtime_error {
 public:
  RecordFailure(std::string record_id, const std::string& reason)
      : std::runtime_error(record_id + ": " + reason), record_id_(std::move(record_id)) {}
  const std::string& record_id() const { return record_id_; }

 private:
  std::string record_id_;
};

}  // namespace stethogen
