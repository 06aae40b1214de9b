// dataset.compression: how much CPU the bundle writer spends on making files smaller
// (docs/recipe.md, docs/bundle-format.md "Storage"). Header-only so that recipe/ (parses it) and
// bundle/ (applies it) share the names without a link dependency.
#pragma once

#include <array>
#include <optional>
#include <string_view>

namespace stethogen {

// fast: deflate only where it saves at least 15 % (by measurement), at level 1;
// compact: byte shuffle + deflate level 4 on every dataset (the smallest files for little extra CPU);
// none: no deflate at all. Every choice keeps the Fletcher32 checksums.
enum class Compression : unsigned char { fast, compact, none };
inline constexpr std::array<Compression, 3> kAllCompressions = {Compression::fast, Compression::compact,
                                                                Compression::none};

constexpr std::string_view name(Compression c) {
  switch (c) {
    case Compression::fast: return "fast";
    case Compression::compact: return "compact";
    case Compression::none: return "none";
  }
  return "fast";
}

constexpr std::optional<Compression> parse_compression(std::string_view s) {
  for (Compression c : kAllCompressions)
    if (name(c) == s) return c;
  return std::nullopt;
}

}  // namespace stethogen
