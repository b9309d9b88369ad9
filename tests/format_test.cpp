#include <catch2/catch.hpp>

#include <cmath>
#include <complex>

#include "tacet/common/format.hpp"

using namespace tacet;

TEST_CASE("SI formatting picks the prefix and drops trailing zeros", "[format]") {
  CHECK(format_si(22000) == "22k");
  CHECK(format_si(4.7e-9) == "4.7n");
  CHECK(format_si(1.5e6) == "1.5M");
  CHECK(format_si(0) == "0");
  CHECK(format_si(-0.001) == "-1m");
  CHECK(format_si(999.96, 4) == "1k");
  CHECK(format_si(1) == "1");
}

TEST_CASE("fixed SI formatting keeps digits for aligned columns", "[format]") {
  CHECK(format_si_fixed(1000) == "1.000k");
  CHECK(format_si_fixed(20000) == "20.00k");
  CHECK(format_si_fixed(158.489) == "158.5");
}

TEST_CASE("exact formatting reads back to the same double", "[format]") {
  const double v = 0.1 + 0.2;
  CHECK(std::stod(format_exact(v)) == v);
}

TEST_CASE("dB and degrees of a phasor", "[format]") {
  CHECK(to_db({0.1, 0}) == Approx(-20));
  CHECK(to_degrees({0, 1}) == Approx(90));
  CHECK(to_degrees({-1, 0}) == Approx(180));
  CHECK(std::isinf(to_db({0, 0})));
}

TEST_CASE("SI formatting uses the language's prefixes f to T and e-notation beyond them", "[format]") {
  // The prefixes are those of SI (BIPM, The International System of Units, 9th ed., table 7).
  CHECK(format_si(1e12) == "1T");               // 1 THz printed 1000GHz before
  CHECK(format_si(2.2e-15) == "2.2f");
  CHECK(format_si(9.99e-306) == "9.99e-306");   // was "9.99e-306f"
  CHECK(format_si(1e299) == "1e299");           // was "1e+299G"
  CHECK(format_si(-3e16) == "-3e16");
  CHECK(format_si_fixed(1e-20) == "1.000e-20"); // was "0.000f"
  CHECK(format_si(4.9e-324) == "4.941e-324");    // a subnormal threw std::out_of_range
  CHECK(format_si(999.96e12, 4) == "1e15");
}
