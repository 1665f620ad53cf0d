// A class the config lists that no label carries is almost always a slip
// ("nonbreeding" for "non_breeding"): it would leave a store without that class
// and every label of the misspelt one dropped, with exit 0. Refused instead.
#pragma once

#include "labels/label_config.hpp"
#include "labels/label_reader.hpp"

namespace tinct {

// Fails (usage) when labels.classes names a class that none of `set`'s labels has,
// listing the classes found with their counts and the nearest one.
void require_listed_classes(const LabelSet& set, const LabelSourceSettings& settings);

}  // namespace tinct
