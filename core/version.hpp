// Every version constant of the project in one place.
#pragma once

namespace stethogen {

// From CMake's project(VERSION), so the version is stated once.
inline constexpr const char* kGeneratorVersion = STETHOGEN_VERSION;

// Bundle format (docs/bundle-format.md). Readers reject another major version.
inline constexpr const char* kBundleFormatName = "stethogen-bundle";
inline constexpr int kBundleFormatMajor = 1;
inline constexpr int kBundleFormatMinor = 1;  // 1.1: root attribute `compression`

}  // namespace stethogen
