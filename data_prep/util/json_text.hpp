// JSON output through nlohmann::json (Debian's nlohmann-json3-dev): objects keep
// insertion order, and two helpers keep tinct's outputs as they have always been
// written: a double that is a whole number is written without ".0" and a
// non-finite one as null; text that is not valid UTF-8 is written with U+FFFD
// replacements instead of failing.
#pragma once

#include <nlohmann/json.hpp>

#include <string>

namespace tinct {

using Json = nlohmann::ordered_json;

// A number for JSON: null when not finite, an integer when whole (|x| < 2^53),
// else the double (written as the shortest text that reads back to it).
Json json_number(double value);

// The text of `value`: compact when indent < 0.
std::string json_text(const Json& value, int indent = -1);

}  // namespace tinct
