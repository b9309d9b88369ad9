#pragma once
// One comparator for every numerical check: |actual - expected| <= rel *
// |expected|, the relative tolerance stating the digits required (1e-9: nine
// significant digits). An exact zero is expected to within `rel` absolutely.

#include <catch2/catch.hpp>
#include <cmath>
#include <complex>
#include <sstream>

namespace tacet::testing {

inline bool is_close(std::complex<double> actual, std::complex<double> expected, double rel) {
  const double scale = std::abs(expected) > 0 ? std::abs(expected) : 1.0;
  return std::abs(actual - expected) <= rel * scale;
}

class IsCloseMatcher : public Catch::MatcherBase<std::complex<double>> {
 public:
  IsCloseMatcher(std::complex<double> expected, double rel) : expected_(expected), rel_(rel) {}
  bool match(const std::complex<double>& actual) const override {
    return is_close(actual, expected_, rel_);
  }
  std::string describe() const override {
    std::ostringstream out;
    out.precision(17);
    out << "is within " << rel_ << " relative (" << -std::log10(rel_) << " digits) of "
        << expected_;
    return out.str();
  }

 private:
  std::complex<double> expected_;
  double rel_;
};

/// CHECK_THAT(value, IsClose(expected, 1e-9)); works for real values too.
inline IsCloseMatcher IsClose(std::complex<double> expected, double rel) { return {expected, rel}; }

}  // namespace tacet::testing
