// The C++ side of coregistration_l7_vs_skimage.py: `shift_tool REFERENCE MOVING
// WINDOW WINDOWS` reads band 1 of two rasters of the same size as floats, runs
// tinct's estimate_shift and prints "dx dy windows_used" (dx > 0: moving's content
// lies to the right of the reference's).
#include <cstdio>
#include <iostream>
#include <string>

#include <opencv2/core.hpp>

#include "colour/coregistration.hpp"
#include "raster/raster.hpp"
#include "util/error.hpp"

namespace {

cv::Mat read_plane(const std::string& path) {
  const tinct::Raster raster = tinct::Raster::open(path);
  cv::Mat plane(raster.height(), raster.width(), CV_32FC1);
  raster.read(1, 0, 0, raster.width(), raster.height(), plane.ptr<float>());
  return plane;
}

}  // namespace

int main(int argc, char** argv) {
  if (argc != 5) {
    std::cerr << "usage: shift_tool REFERENCE MOVING WINDOW WINDOWS\n";
    return 2;
  }
  try {
    const tinct::ShiftEstimate shift =
        tinct::estimate_shift(read_plane(argv[1]), read_plane(argv[2]), std::stoi(argv[3]), std::stoi(argv[4]));
    std::printf("%.6f %.6f %d\n", shift.dx, shift.dy, shift.windows_used);
    return 0;
  } catch (const tinct::Error& error) {
    std::cerr << error.what() << "\n";
    return error.exit_code();
  }
}
