// Every version constant of the project in one place.
#pragma once

namespace stethogen {

inline constexpr const char* kGeneratorVersion = "0.1.0";

// Bundle format (docs/bundle-format.md). Readers reject another major version.
inline constexpr const char* kBundleFormatName = "stethogen-bundle";
inline constexpr int kBundleFormatMajor = 1;
inline constexpr int kBundleFormatMinor = 0;

}  // namespace stethogen
