#include "tacet/circuit/band.hpp"

#include <fmt/format.h>

#include <cmath>

#include "tacet/common/format.hpp"

namespace tacet {

bool Band::valid() const { return std::isfinite(from) && from > 0 && std::isfinite(to) && from < to; }

std::string Band::validate() const {
  const std::string band = fmt::format("--band {}..{}", format_si(from), format_si(to));
  if (!(std::isfinite(from) && from > 0 && std::isfinite(to)))
    return band + ": both ends must be finite frequencies above 0 Hz";
  if (!(from < to)) return band + ": the low end must be below the high end";
  return {};
}

}  // namespace tacet
