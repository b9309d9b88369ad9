// The built-in target curves against the standards that define them.

#include "tacet/circuit/curves.hpp"

#include <catch2/catch.hpp>

#include <array>
#include <cmath>
#include <complex>
#include <utility>

#include "tacet/common/constants.hpp"

using namespace tacet;

namespace {

double db(std::complex<double> z) { return 20 * std::log10(std::abs(z)); }

double relative_db(const BuiltinCurve& curve, double f, double ref = 1e3) {
  return db(curve_at(curve, f)) - db(curve_at(curve, ref));
}

// The playback curve from its three time constants (IEC 60098), written out
// here independently of the table: |T(f)| for T(s) = (1+s t2)/((1+s t1)(1+s t3)).
double riaa_closed_form_db(double f) {
  const double w = kTwoPi * f;
  const double t1 = 3180e-6, t2 = 318e-6, t3 = 75e-6;
  return 10 * std::log10((1 + w * w * t2 * t2) / ((1 + w * w * t1 * t1) * (1 + w * w * t3 * t3)));
}

}  // namespace

TEST_CASE("the curve table lists riaa and a_weighting with their sources", "[curves]") {
  REQUIRE(find_builtin_curve("riaa"));
  REQUIRE(find_builtin_curve("a_weighting"));
  CHECK(find_builtin_curve("riaa")->source.find("IEC 60098") != std::string_view::npos);
  CHECK(find_builtin_curve("a_weighting")->source.find("IEC 61672-1") != std::string_view::npos);
  CHECK(find_builtin_curve("b_weighting") == nullptr);
  CHECK(builtin_curve_names() == std::vector<std::string>{"riaa", "a_weighting"});
}

TEST_CASE("every built-in curve is 0 dB at 1 kHz", "[curves]") {
  for (const BuiltinCurve& curve : builtin_curves()) {
    INFO(curve.name);
    CHECK(std::abs(db(curve_at(curve, 1e3))) < 1e-12);
  }
}

TEST_CASE("riaa has the published relative levels of IEC 60098 playback", "[curves]") {
  const BuiltinCurve& riaa = *find_builtin_curve("riaa");
  // Published: +19.27 dB at 20 Hz and -19.62 dB at 20 kHz re 1 kHz (IEC 60098; from
  // memory), each to the table's 0.01 dB.
  CHECK(relative_db(riaa, 20) == Approx(19.27).margin(0.005));
  CHECK(relative_db(riaa, 20e3) == Approx(-19.62).margin(0.005));
  // The same levels from the time constants, to rounding error, over the audio band.
  for (double f : {20.0, 50.0, 100.0, 500.0, 2122.0, 10e3, 20e3}) {
    INFO(f);
    CHECK(relative_db(riaa, f) == Approx(riaa_closed_form_db(f) - riaa_closed_form_db(1e3)).margin(1e-9));
  }
}

TEST_CASE("a_weighting matches the IEC 61672-1 table at its frequencies", "[curves]") {
  // IEC 61672-1, table of frequency weightings (from memory), at the exact base-ten
  // frequencies 1 kHz x 10^(n/10) that the nominal 10 Hz ... 20 kHz stand for; the
  // table is rounded to 0.1 dB, so each value lies within 0.05 dB.
  constexpr std::array<double, 34> kTable{
      -70.4, -63.4, -56.7, -50.5, -44.7, -39.4, -34.6, -30.2, -26.2, -22.5, -19.1, -16.1,
      -13.4, -10.9, -8.6,  -6.6,  -4.8,  -3.2,  -1.9,  -0.8,  0.0,   0.6,   1.0,   1.2,
      1.3,   1.2,   1.0,   0.5,   -0.1,  -1.1,  -2.5,  -4.3,  -6.6,  -9.3};
  const BuiltinCurve& a = *find_builtin_curve("a_weighting");
  for (int n = -20; n <= 13; ++n) {
    const double f = 1e3 * std::pow(10.0, n / 10.0);
    INFO(f);
    CHECK(relative_db(a, f) == Approx(kTable[static_cast<std::size_t>(n + 20)]).margin(0.0501));
  }
}

TEST_CASE("a_weighting's 1 kHz normalisation is the standard's A1000 of -2.000 dB", "[curves]") {
  // IEC 61672-1: A(f) = 20 log10(R_A(f)) - A1000, A1000 = -2.000 dB (from memory); the raw
  // pole-zero form at 1 kHz is that constant before rounding.
  const double w = kTwoPi * 1e3, w1 = kTwoPi * 20.598997, w2 = kTwoPi * 107.65265,
               w3 = kTwoPi * 737.86223, w4 = kTwoPi * 12194.217;
  const double ra = w4 * w4 * std::pow(w, 4) /
                    ((w * w + w1 * w1) * std::sqrt((w * w + w2 * w2) * (w * w + w3 * w3)) * (w * w + w4 * w4));
  CHECK(20 * std::log10(ra) == Approx(-2.000).margin(0.0005));
}

TEST_CASE("a target curve evaluates its response at j 2 pi f", "[curves]") {
  const TargetCurve t{"1/(1+s*1m)", [](std::complex<double> s) { return 1.0 / (1.0 + s * 1e-3); }};
  const auto z = t.at(1 / (kTwoPi * 1e-3));  // the pole's frequency: 1/(1+j)
  CHECK(z.real() == Approx(0.5));
  CHECK(z.imag() == Approx(-0.5));
  const TargetCurve riaa = target_curve(*find_builtin_curve("riaa"));
  CHECK(riaa.text == "riaa");
  CHECK(db(riaa.at(20)) == Approx(relative_db(*find_builtin_curve("riaa"), 20)));
}
