// Suggests the closest valid name for a mistyped one (edit distance with adjacent
// swaps counted as one edit), so errors can say `did you mean "batch"?`.
#pragma once

#include <string>
#include <vector>

namespace tinct {

// Optimal string alignment distance: insertions, deletions, substitutions and
// swaps of two adjacent characters each cost 1 ("snesor" -> "sensor" is 1).
std::size_t edit_distance(const std::string& a, const std::string& b);

// The candidate nearest to `name`, or "" when none is reasonably close.
std::string nearest_name(const std::string& name, const std::vector<std::string>& candidates);

// Whether `typed` is very likely a slip for `meant` (one edit, two for names of
// eight letters or more; both at least three letters long). Stricter than
// nearest_name: it decides whether an unread key is blamed for a missing one.
bool likely_misspelling(const std::string& typed, const std::string& meant);

}  // namespace tinct
