#include "runs/blas_probe.hpp"

#include <fstream>

namespace tinct {

std::string blas_family(const std::string& path) {
  if (path.find("openblas") != std::string::npos) return "openblas";
  if (path.find("blis") != std::string::npos) return "blis";
  if (path.find("mkl") != std::string::npos) return "mkl";
  if (path.find("atlas") != std::string::npos) return "atlas";
  if (path.find("/blas/libblas") != std::string::npos) return "reference";
  return "unknown";
}

BlasInUse blas_in_use() {
  std::ifstream maps("/proc/self/maps");
  std::string line;
  BlasInUse found;
  while (std::getline(maps, line)) {
    const auto slash = line.find('/');
    if (slash == std::string::npos) continue;
    const std::string path = line.substr(slash);
    const bool is_blas = path.find("libblas") != std::string::npos ||
                         path.find("libopenblas") != std::string::npos ||
                         path.find("libmkl") != std::string::npos ||
                         path.find("libblis") != std::string::npos;
    if (!is_blas) continue;
    found.library = path;
    found.family = blas_family(path);
    if (found.family != "unknown") break;
  }
  return found;
}

}  // namespace tinct
