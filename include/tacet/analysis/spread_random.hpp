#pragma once
// The random streams of tacet spread: counter-based, so any draw of any part
// can be made on its own, in any thread, in any order, and again in a merge.
//
// A stream is keyed by (seed, draw index, name hash) and runs SplitMix64
// (Steele, Lea and Flood, "Fast splittable pseudorandom number generators",
// OOPSLA 2014): state += 0x9E3779B97F4A7C15, output mix64(state), with mix64
// the finaliser of that paper (as in Vigna's splitmix64.c). The starting state
// is mix64(mix64(mix64(seed) ^ index) ^ name_hash); mix64 is a bijection, so
// distinct keys start from well-mixed, distinct states. Names are hashed with
// FNV-1a 64 (Fowler, Noll, Vo).
//
// Draws: a uniform double in [0, 1) from the top 53 bits; uniform on [-1, 1)
// as 2u - 1; normal by Box-Muller (Box and Muller, 1958), sigma 1/3, drawn
// again until it lies within [-1, 1] (a 3-sigma truncation).

#include <cmath>
#include <cstdint>
#include <numbers>
#include <string_view>

#include "tacet/circuit/circuit.hpp"

namespace tacet::spread_random {

constexpr std::uint64_t mix64(std::uint64_t z) {
  z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ULL;
  z = (z ^ (z >> 27)) * 0x94D049BB133111EBULL;
  return z ^ (z >> 31);
}

constexpr std::uint64_t fnv1a(std::string_view text, std::uint64_t hash = 0xCBF29CE484222325ULL) {
  for (const char c : text) {
    hash ^= static_cast<unsigned char>(c);
    hash *= 0x100000001B3ULL;
  }
  return hash;
}

class Stream {
 public:
  Stream(std::uint64_t seed, std::uint64_t index, std::uint64_t name_hash)
      : state_(mix64(mix64(mix64(seed) ^ index) ^ name_hash)) {}

  std::uint64_t next() {
    state_ += 0x9E3779B97F4A7C15ULL;
    return mix64(state_);
  }
  /// [0, 1)
  double uniform01() { return static_cast<double>(next() >> 11) * 0x1.0p-53; }
  /// [-1, 1)
  double uniform() { return 2 * uniform01() - 1; }
  /// Normal, sigma 1/3, within [-1, 1].
  double truncated_normal() {
    for (;;) {
      const double u1 = 1 - uniform01();  // (0, 1]: the log is finite
      const double u2 = uniform01();
      const double z = std::sqrt(-2 * std::log(u1)) * std::cos(2 * std::numbers::pi * u2);
      if (std::abs(z) <= 3) return z / 3;
    }
  }
  double draw(Distribution dist) {
    return dist == Distribution::normal ? truncated_normal() : uniform();
  }

 private:
  std::uint64_t state_;
};

}  // namespace tacet::spread_random
