#pragma once
// The mathematical constants every stage shares, written once.

#include <numbers>

namespace tacet {

inline constexpr double kPi = std::numbers::pi;
inline constexpr double kTwoPi = 2.0 * std::numbers::pi;
inline constexpr double kDegreesPerRadian = 180.0 / std::numbers::pi;

}  // namespace tacet
