#pragma once
// A frequency band, as every analysis takes one: a noise integral, a headroom
// sweep, a diff of noise totals, a spec's from= and to=. One rule for all of
// them: 0 < from < to, both finite.

#include <string>

namespace tacet {

/// A frequency band, Hz.
struct Band {
  double from = 0;
  double to = 0;

  /// Whether 0 < from < to, both finite.
  bool valid() const;
  /// Empty when valid(); else what is wrong, naming the band as the command
  /// line writes it (`--band 20k..20: the low end must be below the high end`).
  std::string validate() const;
};

}  // namespace tacet
