// Text made safe for HTML and SVG (XML) content and attribute values: the five markup
// characters become entities, and control characters that XML 1.0 forbids are dropped,
// so a class name or config line can never break the report's markup.
#pragma once

#include <string>

namespace tinct {

std::string escape_markup(const std::string& text);

}  // namespace tinct
