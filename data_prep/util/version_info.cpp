#include "util/version_info.hpp"

#include <opencv2/core/version.hpp>

#include "build_version.hpp"

namespace tinct {

std::string tinct_version() { return TINCT_BUILD_VERSION; }
std::string opencv_version() { return CV_VERSION; }

}  // namespace tinct
