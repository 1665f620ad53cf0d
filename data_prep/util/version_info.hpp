// Versions of tinct and of the native libraries below data_prep (GDAL, OpenCV),
// for --version and run.yaml. LibTorch's version lives in trainer/runs.
#pragma once

#include <string>

namespace tinct {

std::string tinct_version();
std::string opencv_version();

}  // namespace tinct
