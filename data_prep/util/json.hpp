// A small JSON value for writing machine-readable output (survey --json,
// metrics.json, safetensors headers). Objects keep insertion order. Writing only:
// tinct never needs to parse JSON.
#pragma once

#include <cstdint>
#include <string>
#include <utility>
#include <vector>

namespace tinct {

class Json {
 public:
  Json() : kind_(Kind::null) {}
  Json(bool value) : kind_(Kind::boolean), boolean_(value) {}
  Json(int value) : kind_(Kind::integer), integer_(value) {}
  Json(std::int64_t value) : kind_(Kind::integer), integer_(value) {}
  Json(double value) : kind_(Kind::number), number_(value) {}
  Json(const char* value) : kind_(Kind::text), text_(value) {}
  Json(std::string value) : kind_(Kind::text), text_(std::move(value)) {}

  static Json object() { Json j; j.kind_ = Kind::object; return j; }
  static Json array() { Json j; j.kind_ = Kind::array; return j; }

  Json& set(const std::string& key, Json value);  // object member
  Json& push(Json value);                          // array element

  // Compact when indent < 0; non-finite numbers are written as null.
  std::string dump(int indent = -1) const;

 private:
  enum class Kind { null, boolean, integer, number, text, array, object };
  void write(std::string& out, int indent, int depth) const;

  Kind kind_;
  bool boolean_ = false;
  std::int64_t integer_ = 0;
  double number_ = 0;
  std::string text_;
  std::vector<Json> elements_;
  std::vector<std::pair<std::string, Json>> members_;
};

std::string json_quote(const std::string& text);

}  // namespace tinct
