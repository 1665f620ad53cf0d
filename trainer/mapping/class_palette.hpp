// Class colours for maps: Okabe and Ito's palette for colour-blind readers (eight
// colours, from memory), repeated darker beyond eight classes.
#pragma once

#include <vector>

#include "raster/geotiff_writer.hpp"

namespace tinct {

std::vector<ColourEntry> class_colours(int classes);

inline constexpr ColourEntry kNodataColour{221, 221, 221};
inline constexpr ColourEntry kOutsideColour{90, 90, 90};

}  // namespace tinct
