#include "mapping/class_palette.hpp"

namespace tinct {

std::vector<ColourEntry> class_colours(int classes) {
  static const ColourEntry kOkabeIto[] = {{0, 114, 178},  {230, 159, 0}, {0, 158, 115},  {204, 121, 167},
                                          {86, 180, 233}, {213, 94, 0},  {240, 228, 66}, {0, 0, 0}};
  std::vector<ColourEntry> colours;
  for (int k = 0; k < classes; ++k) {
    ColourEntry c = kOkabeIto[k % 8];
    if (k >= 8) c = {static_cast<std::uint8_t>(c.red * 2 / 3), static_cast<std::uint8_t>(c.green * 2 / 3),
                     static_cast<std::uint8_t>(c.blue * 2 / 3)};
    colours.push_back(c);
  }
  return colours;
}

}  // namespace tinct
