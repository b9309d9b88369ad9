// The backend factory; each backend lives in its own file.

#include "tacet/solve/sparse_solver.hpp"

namespace tacet {

std::unique_ptr<SparseLu> make_klu_lu();
std::unique_ptr<SparseLu> make_eigen_lu();
std::unique_ptr<RealSparseLu> make_real_klu_lu();
std::unique_ptr<RealSparseLu> make_real_eigen_lu();

const char* to_string(SolverKind kind) {
  switch (kind) {
    case SolverKind::klu:
      return "klu";
    case SolverKind::eigen:
      return "eigen";
  }
  return "?";
}

std::unique_ptr<SparseLu> make_unchecked_sparse_lu(SolverKind kind) {
  return kind == SolverKind::eigen ? make_eigen_lu() : make_klu_lu();
}

std::unique_ptr<RealSparseLu> make_unchecked_real_sparse_lu(SolverKind kind) {
  return kind == SolverKind::eigen ? make_real_eigen_lu() : make_real_klu_lu();
}

std::unique_ptr<SparseLu> make_sparse_lu(SolverKind kind) {
  return checked(make_unchecked_sparse_lu(kind));
}

std::unique_ptr<RealSparseLu> make_real_sparse_lu(SolverKind kind) {
  return checked(make_unchecked_real_sparse_lu(kind));
}

}  // namespace tacet
