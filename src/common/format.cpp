#include "tacet/common/format.hpp"
#include "tacet/common/constants.hpp"

#include <algorithm>
#include <array>
#include <charconv>
#include <cmath>

#include <fmt/format.h>

namespace tacet {

namespace {

struct Scaled {
  double mantissa;
  const char* prefix;
};

Scaled scale_si(double value, int significant) {
  static constexpr std::array<const char*, 9> kPrefixes{"f", "p", "n", "u", "m", "", "k", "M", "G"};
  if (value == 0 || !std::isfinite(value)) return {value, ""};
  int exponent3 = static_cast<int>(std::floor(std::log10(std::abs(value)) / 3));
  exponent3 = std::clamp(exponent3, -5, 3);
  double mantissa = value / std::pow(1000.0, exponent3);
  // Rounding to the printed digits may carry into the next prefix (999.96 -> 1000).
  double rounded = std::stod(fmt::format("{:.{}g}", mantissa, significant));
  if (std::abs(rounded) >= 1000 && exponent3 < 3) {
    ++exponent3;
    mantissa = value / std::pow(1000.0, exponent3);
  }
  return {mantissa, kPrefixes[static_cast<std::size_t>(exponent3 + 5)]};
}

int decimals_for(double mantissa, int significant) {
  int integer_digits = std::abs(mantissa) >= 100 ? 3 : std::abs(mantissa) >= 10 ? 2 : 1;
  return std::max(0, significant - integer_digits);
}

}  // namespace

std::string format_si(double value, int significant) {
  auto [mantissa, prefix] = scale_si(value, significant);
  std::string digits = fmt::format("{:.{}g}", mantissa, significant);
  if (digits.find('e') != std::string::npos) digits = fmt::format("{}", mantissa);
  return digits + prefix;
}

std::string format_si_fixed(double value, int significant) {
  auto [mantissa, prefix] = scale_si(value, significant);
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
