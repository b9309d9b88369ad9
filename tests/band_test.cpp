#include <catch2/catch.hpp>

#include <limits>

#include "tacet/circuit/band.hpp"

using namespace tacet;

TEST_CASE("a band runs from a frequency above 0 to a higher one, both finite", "[band]") {
  CHECK(Band{20, 20e3}.valid());
  CHECK(Band{20, 20e3}.validate().empty());
  CHECK_FALSE(Band{20e3, 20}.valid());
  CHECK_FALSE(Band{20, 20}.valid());
  CHECK_FALSE(Band{0, 20}.valid());
  CHECK_FALSE(Band{20, std::numeric_limits<double>::infinity()}.valid());
  CHECK(Band{20e3, 20}.validate() == "--band 20k..20: the low end must be below the high end");
  CHECK(Band{0, 20}.validate() == "--band 0..20: both ends must be finite frequencies above 0 Hz");
}
