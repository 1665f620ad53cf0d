#include <catch2/catch.hpp>

#include <cmath>

#include "util/json.hpp"

using tinct::Json;

TEST_CASE("JSON objects keep insertion order and escape text") {
  Json j = Json::object();
  j.set("b", 1).set("a", "x\"y\n").set("n", Json()).set("ok", true);
  CHECK(j.dump() == "{\"b\":1,\"a\":\"x\\\"y\\n\",\"n\":null,\"ok\":true}");
}

TEST_CASE("JSON numbers round-trip doubles and write non-finite values as null") {
  Json j = Json::array();
  j.push(0.1).push(std::nan("")).push(std::int64_t(12345678901));
  CHECK(j.dump() == "[0.10000000000000001,null,12345678901]");
}
