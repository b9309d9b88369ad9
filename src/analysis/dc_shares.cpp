// The sums the linear-time DC paths carry (dc_shares.hpp).

#include "tacet/analysis/dc_shares.hpp"

#include <algorithm>
#include <cmath>

namespace tacet {
namespace {

// |S limit|: the size of a share, the order of the largest contributors.
double share(double sensitivity, const CascadeError& error) { return std::abs(sensitivity * error.limit); }

bool before(double size, std::size_t error, const CascadeShare& other, const std::vector<CascadeError>& errors) {
  const double other_size = share(other.sensitivity, errors[other.error]);
  return size > other_size || (size == other_size && error < other.error);
}

}  // namespace

bool same_rows(const std::vector<CascadeError>& a, const std::vector<CascadeError>& b) {
  if (a.size() != b.size()) return false;
  for (std::size_t e = 0; e < a.size(); ++e) {
    const CascadeError &x = a[e], &y = b[e];
    if (x.part_count != y.part_count || x.in_band != y.in_band) return false;
    for (int p = 0; p < x.part_count; ++p) {
      const auto k = static_cast<std::size_t>(p);
      if (x.parts[k].row != y.parts[k].row || x.parts[k].coefficient != y.parts[k].coefficient) return false;
    }
  }
  return true;
}

void DcSums::insert(std::size_t error, double sensitivity, const std::vector<CascadeError>& errors) {
  const double size = share(sensitivity, errors[error]);
  int at = 0;
  while (at < count && !before(size, error, top[static_cast<std::size_t>(at)], errors)) ++at;
  if (at == 3) return;
  for (int i = std::min(count, 2); i > at; --i) top[static_cast<std::size_t>(i)] = top[static_cast<std::size_t>(i) - 1];
  top[static_cast<std::size_t>(at)] = {error, sensitivity};
  count = std::min(count + 1, 3);
}

void DcSums::add(std::size_t error, double sensitivity, const std::vector<CascadeError>& errors) {
  if (sensitivity == 0) return;
  const CascadeError& e = errors[error];
  if (e.in_band) {
    const double term = std::abs(sensitivity) * e.limit;
    worst += term;
    squares += term * term;
  }
  insert(error, sensitivity, errors);
}

void DcSums::add_scaled(const DcSums& other, double tau, const std::vector<CascadeError>& errors) {
  if (tau == 0) return;
  worst += std::abs(tau) * other.worst;
  squares += tau * tau * other.squares;
  for (int i = 0; i < other.count; ++i) {
    const CascadeShare& s = other.top[static_cast<std::size_t>(i)];
    insert(s.error, tau * s.sensitivity, errors);
  }
}

bool DcSums::finite() const { return std::isfinite(worst) && std::isfinite(squares); }

}  // namespace tacet
