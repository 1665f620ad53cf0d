// Suggests the closest valid name for a mistyped one (Levenshtein distance), so
// errors can say `did you mean "batch"?`.
#pragma once

#include <string>
#include <vector>

namespace tinct {

std::size_t edit_distance(const std::string& a, const std::string& b);

// The candidate nearest to `name`, or "" when none is reasonably close.
std::string nearest_name(const std::string& name, const std::vector<std::string>& candidates);

}  // namespace tinct
