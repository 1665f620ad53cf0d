#include "util/json_text.hpp"

#include <cmath>
#include <cstdint>

namespace tinct {

Json json_number(double value) {
  if (!std::isfinite(value)) return nullptr;
  constexpr double kExactIntegers = 9007199254740992.0;  // 2^53
  if (value == std::floor(value) && std::fabs(value) < kExactIntegers) {
    return static_cast<std::int64_t>(value);
  }
  return value;
}

std::string json_text(const Json& value, int indent) {
  return value.dump(indent, ' ', /*ensure_ascii=*/false, nlohmann::json::error_handler_t::replace);
}

}  // namespace tinct
