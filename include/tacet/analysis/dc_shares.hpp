#pragma once
// What the linear-time paths of the DC bands (dc_cascade.hpp, dc_tree.hpp)
// carry for a node: the worst-case sum, the root-sum-square's sum and the
// three largest shares of a set of DC errors. Both paths rest on one fact:
// when every error of a set reaches a node v through one unknown u, each
// error's share at v is tau times its share at u, so the set's sums at v are
// |tau| (tau^2) times those at u and its largest shares are the same errors
// in the same order. Sums of disjoint sets add, and the three largest of a
// union are the three largest of the two lists of three: nothing is ever
// taken back out of a sum.

#include <array>
#include <cstddef>
#include <vector>

namespace tacet {

/// One DC error: the sum of up to two unit right-hand sides (a 1 in one row
/// of the DC system) times coefficients, and its limit.
struct CascadeError {
  struct Part {
    int row = -1;
    double coefficient = 0;
  };
  std::array<Part, 2> parts{};
  int part_count = 0;
  double limit = 0;     ///< weight of |S| in the band (signed for ib: volts = S limit)
  bool in_band = true;  ///< false: a nominal shift (ib), a contributor only
};

/// An error's share at a node: its index and sensitivity S (V per unit).
struct CascadeShare {
  std::size_t error = 0;
  double sensitivity = 0;
};

/// The same errors on the same rows with the same coefficients (the limits
/// may differ: a plan made for `a` serves `b`).
bool same_rows(const std::vector<CascadeError>& a, const std::vector<CascadeError>& b);

/// A set of errors' sums at one node.
struct DcSums {
  double worst = 0, squares = 0;
  std::array<CascadeShare, 3> top{};  ///< largest |S limit| first, earlier errors first among equals
  int count = 0;

  /// Error `error` with sensitivity s joins the set (zero shares stay out).
  void add(std::size_t error, double sensitivity, const std::vector<CascadeError>& errors);
  /// A disjoint set reaching this node through a factor tau joins the set.
  void add_scaled(const DcSums& other, double tau, const std::vector<CascadeError>& errors);
  /// Only among the largest, not in the sums (a share kept apart, shown).
  void insert(std::size_t error, double sensitivity, const std::vector<CascadeError>& errors);
  bool finite() const;
};

}  // namespace tacet
