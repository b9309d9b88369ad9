#pragma once
// Comma-separated values for programs: a header row, full precision.

#include <string>

#include "tacet/ac.hpp"

namespace tacet {

/// Columns: f_Hz, then per probe P: P_re, P_im, P_dB, P_deg.
std::string ac_csv(const AcResult& result);

}  // namespace tacet
