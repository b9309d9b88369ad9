#include "tacet/solve/search.hpp"

#include <algorithm>
#include <cmath>

namespace tacet {

std::vector<double> log_grid(double from, double to, int per_decade) {
  const int n = std::max(2, static_cast<int>(std::ceil(std::log10(to / from) * per_decade)) + 1);
  std::vector<double> f(static_cast<std::size_t>(n));
  for (int k = 0; k < n; ++k)
    f[static_cast<std::size_t>(k)] = from * std::pow(to / from, static_cast<double>(k) / (n - 1));
  f.back() = to;
  return f;
}

double bisect_log(double inside, double outside, const std::function<bool(double)>& holds,
                  double relative) {
  double a = std::log(inside), b = std::log(outside);
  const double width = std::log1p(relative);
  for (int it = 0; it < 200 && std::abs(b - a) > width; ++it) {
    const double m = (a + b) / 2;
    (holds(std::exp(m)) ? b : a) = m;
  }
  return std::exp((a + b) / 2);
}

Peak golden_max_log(double low, double high, const std::function<double(double)>& value,
                    double relative) {
  // Each step keeps one inner point and its value, so it costs one evaluation.
  double a = std::log(low), b = std::log(high);
  const double g = (std::sqrt(5.0) - 1) / 2;
  double c = b - g * (b - a), d = a + g * (b - a);
  double at_c = value(std::exp(c)), at_d = value(std::exp(d));
  for (int it = 0; it < 200 && b - a > relative; ++it) {
    if (at_c > at_d) {
      b = d, d = c, at_d = at_c;
      c = b - g * (b - a), at_c = value(std::exp(c));
    } else {
      a = c, c = d, at_c = at_d;
      d = a + g * (b - a), at_d = value(std::exp(d));
    }
  }
  const double f = std::exp((a + b) / 2);
  return {f, value(f)};
}

}  // namespace tacet
