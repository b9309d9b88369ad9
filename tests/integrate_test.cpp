// Band integration against closed-form integrals; each check names its source.

#include "tacet/solve/integrate.hpp"

#include <catch2/catch.hpp>
#include <cmath>
#include <limits>

#include "is_close.hpp"

using namespace tacet;
using namespace tacet::testing;

namespace {

constexpr double kPi = 3.14159265358979323846;

BandIntegral integrate_scalar(double f1, double f2, const std::function<double(double)>& g,
                              const BandIntegrationOptions& options = {}) {
  return integrate_band(
      f1, f2, 1, 1, [&](double f, double* out) { out[0] = g(f); }, options);
}

}  // namespace

TEST_CASE("the two-point Gauss-Legendre rule has nodes at plus and minus 1/sqrt(3)",
          "[integrate]") {
  // Abramowitz and Stegun, Handbook of Mathematical Functions, table 25.4 (n = 2).
  std::vector<double> x, w;
  gauss_legendre(2, x, w);
  REQUIRE(x.size() == 2);
  CHECK_THAT(std::abs(x[0]), IsClose(1 / std::sqrt(3.0), 1e-15));
  CHECK_THAT(x[0] + x[1], IsClose(0.0, 1e-15));
  CHECK_THAT(w[0], IsClose(1.0, 1e-15));
  CHECK_THAT(w[1], IsClose(1.0, 1e-15));
}

TEST_CASE("the eight-point Gauss-Legendre rule is exact up to degree 15 and no further",
          "[integrate]") {
  // An n-point Gauss rule integrates polynomials of degree 2n - 1 exactly
  // (Abramowitz and Stegun 25.4.29); integral of x^k over [-1, 1] is 2/(k + 1), k even.
  std::vector<double> x, w;
  gauss_legendre(8, x, w);
  auto rule = [&](int power) {
    double sum = 0;
    for (std::size_t k = 0; k < x.size(); ++k) sum += w[k] * std::pow(x[k], power);
    return sum;
  };
  CHECK_THAT(rule(0), IsClose(2.0, 1e-14));
  CHECK_THAT(rule(14), IsClose(2.0 / 15, 1e-13));
  CHECK_FALSE(is_close(rule(16), 2.0 / 17, 1e-6));
}

TEST_CASE("1/f over a band integrates to ln(f2/f1)", "[integrate]") {
  // Elementary calculus: integral of df/f is ln f.
  const auto r = integrate_scalar(20, 20e3, [](double f) { return 1 / f; });
  CHECK_THAT(r.values[0], IsClose(std::log(1000.0), 1e-10));
  CHECK(r.converged);
}

TEST_CASE("a single-pole power response integrates to fc (atan(f2/fc) - atan(f1/fc))",
          "[integrate]") {
  // Elementary calculus: integral of 1/(1 + (f/fc)^2) df = fc atan(f/fc).
  const double fc = 1591.5494309189535;
  for (auto [f1, f2] : {std::pair{20.0, 20e3}, std::pair{1.0, 1e9}, std::pair{1500.0, 1700.0}}) {
    INFO("band " << f1 << " .. " << f2);
    const auto r = integrate_scalar(f1, f2, [&](double f) { return 1 / (1 + (f / fc) * (f / fc)); });
    CHECK_THAT(r.values[0], IsClose(fc * (std::atan(f2 / fc) - std::atan(f1 / fc)), 1e-9));
  }
}

TEST_CASE("a 1/f corner integrates to fc ln(f2/f1) + f2 - f1", "[integrate]") {
  // Elementary calculus: integral of (1 + fc/f) df.
  const double fc = 150;
  const auto r = integrate_scalar(0.1, 100e3, [&](double f) { return 1 + fc / f; });
  CHECK_THAT(r.values[0], IsClose(fc * std::log(1e6) + 100e3 - 0.1, 1e-10));
}

TEST_CASE("a sharp resonance is bisected until its area converges", "[integrate]") {
  // Integral over 0..inf of dx / ((1 - x^2)^2 + x^2/Q^2) = pi Q / 2, x = f/f0
  // (by residues; the closed form is from memory, and scipy.integrate.quad
  // gives 157.07963267948963 for Q = 100, 2e-16 from it). The band below 1e-6 f0 and above
  // 1e6 f0 holds about 1e-6 f0 of the area, 6e-9 relative.
  const double f0 = 1e3, q = 100;
  auto g = [&](double f) {
    const double x = f / f0;
    return 1 / ((1 - x * x) * (1 - x * x) + x * x / (q * q));
  };
  const auto r = integrate_scalar(1e-6 * f0, 1e6 * f0, g);
  CHECK_THAT(r.values[0], IsClose(kPi * q / 2 * f0, 1e-7));
  CHECK(r.converged);
  // The first cut is 15 points per decade over 12 decades: the bisection did work.
  CHECK(r.evaluations > 2 * 15 * 12);
}

TEST_CASE("unchecked components are integrated on the same points as the checked ones",
          "[integrate]") {
  // Component 0 is the sum of components 1 and 2; the integrals add up likewise
  // (linearity of the integral).
  const double fc = 100;
  const auto r = integrate_band(10, 10e3, 3, 1, [&](double f, double* out) {
    out[1] = 1 / (1 + (f / fc) * (f / fc));
    out[2] = 3.0;
    out[0] = out[1] + out[2];
  });
  CHECK_THAT(r.values[1], IsClose(fc * (std::atan(100.0) - std::atan(0.1)), 1e-9));
  CHECK_THAT(r.values[2], IsClose(3.0 * (10e3 - 10), 1e-12));
  CHECK_THAT(r.values[0], IsClose(r.values[1] + r.values[2], 1e-14));
}

TEST_CASE("a depth limit that stops the bisection is reported as not converged",
          "[integrate]") {
  BandIntegrationOptions coarse;
  coarse.max_depth = 0;
  coarse.relative_tolerance = 1e-15;
  const double f0 = 1e3, q = 1e4;
  const auto r = integrate_scalar(1, 1e6, [&](double f) {
    const double x = f / f0;
    return 1 / ((1 - x * x) * (1 - x * x) + x * x / (q * q));
  }, coarse);
  CHECK_FALSE(r.converged);
}

TEST_CASE("a resonance up to Q = 1e6 is found wherever it sits against the panels",
          "[integrate]") {
  // g = 1/((1 - x^2)^2 + x^2/Q^2), x = f/f0, over 1 Hz..1 MHz. References:
  // scipy.integrate.quad (epsrel 1e-13) on [1, 1e6] cut at f0 (1 +- k/Q),
  // k = 1, 3, 10 .. 1e5, summed; each is within 1e-9 of pi Q f0 / 2 less the
  // tails (by residues, from memory). f0 = 10^3.5 is the middle of a first-cut
  // decade (where the first bisection splits), 10^3 a first-cut boundary,
  // 10^3.25 and 10^3.125 the second and third bisection points, 1234.5 Hz none.
  struct Case {
    double f0, q, reference;
  };
  const Case cases[] = {
      {std::pow(10, 3.5), 10, 49671.94129558042},
      {std::pow(10, 3.5), 1e3, 4967293.132864758},
      {std::pow(10, 3.5), 1e6, 4967294131.934523},
      {1e3, 10, 15706.963266952298},
      {1e3, 1e3, 1570795.3267938504},
      {1e3, 1e6, 1570796325.7822375},
      {std::pow(10, 3.25), 10, 27932.14764949825},
      {std::pow(10, 3.25), 1e3, 2793313.765300628},
      {std::pow(10, 3.25), 1e6, 2793314764.2629347},
      {std::pow(10, 3.125), 10, 20945.90567201708},
      {std::pow(10, 3.125), 1e3, 2094689.567342958},
      {std::pow(10, 3.125), 1e6, 2094690566.2619317},
      {1234.5, 10, 19390.48065307354},
      {1234.5, 1e3, 1939147.0654270328},
      {1234.5, 1e6, 1939148064.4454386},
  };
  for (const Case& c : cases) {
    INFO("f0 = " << c.f0 << ", Q = " << c.q);
    const auto r = integrate_scalar(1, 1e6, [&](double f) {
      const double x = f / c.f0;
      return 1 / ((1 - x * x) * (1 - x * x) + x * x / (c.q * c.q));
    });
    CHECK_THAT(r.values[0], IsClose(c.reference, 1e-7));
    CHECK(r.converged);
  }
}

TEST_CASE("a component that is not finite is reported at once and leaves the others intact",
          "[integrate]") {
  // Component 1 is infinite from 100 Hz up: its integral is unbounded, and it
  // must not drive the bisection; component 0 (the white 1.0) integrates to the
  // band width (elementary).
  const auto r = integrate_band(10, 1e3, 2, 2, [](double f, double* out) {
    out[0] = 1.0;
    out[1] = f > 100 ? std::numeric_limits<double>::infinity() : 1.0;
  });
  CHECK_THAT(r.values[0], IsClose(990.0, 1e-12));
  CHECK(std::isinf(r.values[1]));
  REQUIRE(r.non_finite_at.size() == 2);
  CHECK(r.non_finite_at[0] == 0);
  CHECK(r.non_finite_at[1] > 100);
  CHECK(r.evaluations < 100);
}

TEST_CASE("an integrand that is nowhere finite ends the integral at its first sample",
          "[integrate]") {
  const auto r = integrate_band(10, 1e3, 3, 1, [](double, double* out) {
    out[0] = std::numeric_limits<double>::quiet_NaN();
    out[1] = out[2] = 1.0;
  });
  CHECK(r.evaluations == 1);
  CHECK_FALSE(r.converged);
  CHECK_THAT(r.non_finite_at[0], IsClose(10.0, 1e-12));
  for (double v : r.values) CHECK_FALSE(std::isfinite(v));
}

TEST_CASE("an integrand that is exactly zero is done on its first cut", "[integrate]") {
  const auto r = integrate_band(1, 1e6, 2, 2, [](double, double* out) { out[0] = out[1] = 0.0; });
  CHECK(r.values[0] == 0.0);
  CHECK(r.values[1] == 0.0);
  CHECK(r.converged);
  // Six decades of 15 Kronrod nodes and 7 panel ends: no bisection.
  CHECK(r.evaluations == 6 * 15 + 7);
}
