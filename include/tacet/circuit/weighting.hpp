#pragma once
// The names of the noise weightings a noise analysis or a noise/snr spec may
// apply (`--weight a`, `weight=itu468`). Only the names live here, so that
// elaboration can check a spec's weight= without the curves; the curves
// themselves are in analysis/weighting.hpp.

#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace tacet {

enum class Weighting {
  none,    ///< flat: |W(f)| = 1
  a,       ///< A-weighting, IEC 61672-1, 0 dB at 1 kHz
  itu468,  ///< ITU-R BS.468-4, 0 dB at 1 kHz (+12.2 dB at 6.3 kHz)
};

/// "none", "a", "itu468" (the command-line, spec and JSON spelling).
const char* to_string(Weighting weighting);
/// The weighting a name spells; nullopt for any other word ("none" included:
/// a weight is named only to apply one).
std::optional<Weighting> parse_weighting(std::string_view text);
/// The names that parse ("a", "itu468"), for hints.
const std::vector<std::string>& weighting_names();

}  // namespace tacet
