#include "tacet/common/format.hpp"
#include "tacet/common/constants.hpp"

#include <algorithm>
#include <array>
#include <charconv>
#include <cmath>
#include <cstdlib>

#include <fmt/format.h>

namespace tacet {

namespace {

struct Scaled {
  double mantissa;
  const char* prefix;
};

// The prefixes the language reads (f .. T, docs/language.md); a value outside
// them is written in e-notation instead of being forced onto the last prefix
// ("1e-18", not "0.000f"; "2e15", not "2000TG").
constexpr int kLowestPrefix = -5;   // f
constexpr int kHighestPrefix = 4;   // T

Scaled scale_si(double value, int significant) {
  static constexpr std::array<const char*, 10> kPrefixes{"f", "p", "n", "u", "m", "", "k", "M", "G", "T"};
  if (value == 0 || !std::isfinite(value)) return {value, ""};
  int exponent3 = static_cast<int>(std::floor(std::log10(std::abs(value)) / 3));
  double mantissa = value / std::pow(1000.0, exponent3);
  // Rounding to the printed digits may carry into the next prefix (999.96 -> 1000).
  // strtod, not stod: stod throws on a subnormal result.
  const double rounded = std::strtod(fmt::format("{:.{}g}", mantissa, significant).c_str(), nullptr);
  if (std::abs(rounded) >= 1000) {
    ++exponent3;
    mantissa = value / std::pow(1000.0, exponent3);
  }
  if (exponent3 < kLowestPrefix || exponent3 > kHighestPrefix) return {value, nullptr};
  return {mantissa, kPrefixes[static_cast<std::size_t>(exponent3 - kLowestPrefix)]};
}

// The exponent as the language writes it, without printf's '+' and leading
// zeros: "2e+15" -> "2e15", "1e-05" -> "1e-5".
std::string tidy_exponent(std::string text) {
  const auto e = text.find('e');
  if (e == std::string::npos) return text;
  std::string exponent = text.substr(e + 1);
  const bool negative = !exponent.empty() && exponent[0] == '-';
  if (!exponent.empty() && (exponent[0] == '-' || exponent[0] == '+')) exponent.erase(0, 1);
  exponent.erase(0, std::min(exponent.find_first_not_of('0'), exponent.size() - 1));
  return text.substr(0, e) + "e" + (negative ? "-" : "") + exponent;
}

int decimals_for(double mantissa, int significant) {
  int integer_digits = std::abs(mantissa) >= 100 ? 3 : std::abs(mantissa) >= 10 ? 2 : 1;
  return std::max(0, significant - integer_digits);
}

}  // namespace

std::string format_si(double value, int significant) {
  auto [mantissa, prefix] = scale_si(value, significant);
  if (!prefix) return tidy_exponent(fmt::format("{:.{}g}", value, significant));
  std::string digits = fmt::format("{:.{}g}", mantissa, significant);
  if (digits.find('e') != std::string::npos) digits = fmt::format("{}", mantissa);
  return digits + prefix;
}

std::string format_si_fixed(double value, int significant) {
  auto [mantissa, prefix] = scale_si(value, significant);
  if (!prefix) return tidy_exponent(fmt::format("{:.{}e}", value, std::max(0, significant - 1)));
  return fmt::format("{:.{}f}{}", mantissa, decimals_for(mantissa, significant), prefix);
}

std::string format_exact(double value) {
  std::array<char, 32> buffer{};
  auto [end, ec] = std::to_chars(buffer.data(), buffer.data() + buffer.size(), value);
  return std::string(buffer.data(), end);
}

}  // namespace tacet

namespace tacet {

double to_db(std::complex<double> z) { return 20.0 * std::log10(std::abs(z)); }

double to_degrees(std::complex<double> z) {
  return std::arg(z) * kDegreesPerRadian;
}

}  // namespace tacet
