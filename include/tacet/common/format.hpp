#pragma once
// Number formatting shared by every writer: SI-prefixed values for people,
// shortest round-trip text for programs.

#include <string>

namespace tacet {

/// `value` with an SI prefix and `significant` digits, e.g. 22000 -> "22k",
/// 4.7e-9 -> "4.7n", 1.5e6 -> "1.5M" (trailing zeros dropped). The prefix is
/// the language's own, so the text reads back as the same number.
std::string format_si(double value, int significant = 4);

/// Like format_si but keeps trailing zeros, for aligned table columns
/// ("1.000k", "20.00k").
std::string format_si_fixed(double value, int significant = 4);

/// The shortest text that reads back as exactly `value` (for csv).
std::string format_exact(double value);

}  // namespace tacet

#include <complex>

namespace tacet {

/// 20 log10 |z|; -inf for zero (writers print that as "-inf" or null).
double to_db(std::complex<double> z);
/// arg z in degrees, (-180, 180].
double to_degrees(std::complex<double> z);

}  // namespace tacet
