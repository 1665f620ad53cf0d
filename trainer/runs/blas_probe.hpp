// Which BLAS library the process actually loaded, read from /proc/self/maps.
// Debian's LibTorch links the generic libblas.so.3, which the alternatives system
// points at OpenBLAS when libopenblas0-pthread is installed, else at the reference
// BLAS (about 30x slower matmuls): worth a warning.
#pragma once

#include <string>

namespace tinct {

struct BlasInUse {
  std::string library;  // resolved path of the mapped BLAS, "" when none is mapped
  std::string family;   // openblas, blis, mkl, reference, or unknown
  bool is_reference() const { return family == "reference"; }
};

BlasInUse blas_in_use();
// Classifies a library path (exposed for tests).
std::string blas_family(const std::string& library_path);

}  // namespace tinct
