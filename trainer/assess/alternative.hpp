// Which way a test looks: two-sided, or one-sided for "the first arm scores higher (greater)
// or lower (less) than the second". Shared by the paired tests.
#pragma once

namespace tinct {

enum class Alternative { two_sided, greater, less };

inline const char* alternative_name(Alternative alternative) {
  switch (alternative) {
    case Alternative::greater: return "greater";
    case Alternative::less: return "less";
    default: return "two-sided";
  }
}

}  // namespace tinct
