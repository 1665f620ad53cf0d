// The C++ side of labels_transform_vs_cs2cs.py: `point_transform_tool FROM TO`
// reads "x y" lines (x = longitude or easting) from stdin, transforms each with
// tinct's PointTransform and prints "x y" with 10 decimals, or "failed".
#include <cstdio>
#include <iostream>
#include <string>

#include "raster/point_transform.hpp"
#include "util/error.hpp"

int main(int argc, char** argv) {
  if (argc != 3) {
    std::cerr << "usage: point_transform_tool FROM_CRS TO_CRS < points\n";
    return 2;
  }
  try {
    const tinct::PointTransform transform(argv[1], argv[2]);
    double x = 0, y = 0;
    while (std::cin >> x >> y) {
      if (transform.apply(x, y)) {
        std::printf("%.10f %.10f\n", x, y);
      } else {
        std::printf("failed\n");
      }
    }
    return 0;
  } catch (const tinct::Error& error) {
    std::cerr << error.what() << "\n";
    return error.exit_code();
  }
}
