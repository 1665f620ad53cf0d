// tinct's JSON output through nlohmann::json: insertion order, escaping, the number
// rules of json_number (whole numbers without ".0", non-finite as null, other
// doubles as the shortest text that reads back to them) and invalid UTF-8.
#include <catch2/catch.hpp>

#include <cmath>
#include <cstdlib>
#include <limits>

#include "util/json_text.hpp"

using tinct::Json;
using tinct::json_number;
using tinct::json_text;

TEST_CASE("JSON objects keep insertion order and escape text") {
  Json j = Json::object();
  j["b"] = 1;
  j["a"] = "x\"y\n";
  j["n"] = nullptr;
  j["ok"] = true;
  CHECK(json_text(j) == "{\"b\":1,\"a\":\"x\\\"y\\n\",\"n\":null,\"ok\":true}");
  CHECK(json_text(j, 2) == "{\n  \"b\": 1,\n  \"a\": \"x\\\"y\\n\",\n  \"n\": null,\n  \"ok\": true\n}");
}

TEST_CASE("JSON numbers: whole doubles as integers, non-finite as null, others read back exactly") {
  const Json j = {json_number(0.1), json_number(std::nan("")), json_number(std::numeric_limits<double>::infinity()),
                  Json(std::int64_t{12345678901}), json_number(1000.0), json_number(0.0), json_number(-2.5),
                  json_number(1.0 / 3.0)};
  const std::string text = json_text(j);
  CHECK(text == "[0.1,null,null,12345678901,1000,0,-2.5,0.3333333333333333]");
  CHECK(std::strtod("0.3333333333333333", nullptr) == 1.0 / 3.0);  // the shortest text round-trips
}

TEST_CASE("JSON text that is not UTF-8 is written with replacement characters, not refused") {
  const Json j = std::string("Lab \xe9t\xe9");  // Latin-1 bytes
  CHECK(json_text(j) == "\"Lab \xef\xbf\xbdt\xef\xbf\xbd\"");
}
