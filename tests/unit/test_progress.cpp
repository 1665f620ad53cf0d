#include <catch2/catch.hpp>

#include "util/progress.hpp"

TEST_CASE("durations print as h:mm:ss, unknown as ?") {
  CHECK(tinct::Progress::format_duration(0) == "0:00:00");
  CHECK(tinct::Progress::format_duration(83.4) == "0:01:23");
  CHECK(tinct::Progress::format_duration(3600 * 5 + 61) == "5:01:01");
  CHECK(tinct::Progress::format_duration(-1) == "?");
}
