#include <catch2/catch.hpp>

#include "util/nearest_name.hpp"

using tinct::edit_distance;
using tinct::nearest_name;

TEST_CASE("edit distance counts insertions, deletions, substitutions and adjacent swaps") {
  // Worked example: kitten -> sitting needs 3 edits (textbook example, common practice).
  CHECK(edit_distance("kitten", "sitting") == 3);
  CHECK(edit_distance("", "abc") == 3);
  CHECK(edit_distance("batch", "batch") == 0);
  CHECK(edit_distance("flaw", "lawn") == 2);
  // An adjacent swap is one slip (optimal string alignment), two in Levenshtein's count.
  CHECK(edit_distance("snesor", "sensor") == 1);
  CHECK(edit_distance("outptu", "output") == 1);
  CHECK(edit_distance("ca", "abc") == 3);  // OSA, not full Damerau (which gives 2)
}

TEST_CASE("a likely misspelling is one slip away, two for long names") {
  CHECK(tinct::likely_misspelling("colur", "colour"));
  CHECK(tinct::likely_misspelling("Sensor", "sensor"));
  CHECK(tinct::likely_misspelling("resolutoin", "resolution"));
  CHECK(tinct::likely_misspelling("resloutoin", "resolution"));
  CHECK_FALSE(tinct::likely_misspelling("y", "x"));
  CHECK_FALSE(tinct::likely_misspelling("id", "x"));
  CHECK_FALSE(tinct::likely_misspelling("inputs", "output"));
  CHECK_FALSE(tinct::likely_misspelling("sensor", "sensor"));
}

TEST_CASE("nearest name suggests close keys and nothing for unrelated ones") {
  const std::vector<std::string> keys{"batch", "learning_rate", "epochs", "seed"};
  CHECK(nearest_name("bacth", keys) == "batch");
  CHECK(nearest_name("epoch", keys) == "epochs");
  CHECK(nearest_name("learning_rat", keys) == "learning_rate");
  CHECK(nearest_name("zzzzzzzz", keys).empty());
}
