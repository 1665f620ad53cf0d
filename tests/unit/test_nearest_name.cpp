#include <catch2/catch.hpp>

#include "util/nearest_name.hpp"

using tinct::edit_distance;
using tinct::nearest_name;

TEST_CASE("edit distance is the Levenshtein distance") {
  // Worked example: kitten -> sitting needs 3 edits (textbook example, common practice).
  CHECK(edit_distance("kitten", "sitting") == 3);
  CHECK(edit_distance("", "abc") == 3);
  CHECK(edit_distance("batch", "batch") == 0);
  CHECK(edit_distance("flaw", "lawn") == 2);
}

TEST_CASE("nearest name suggests close keys and nothing for unrelated ones") {
  const std::vector<std::string> keys{"batch", "learning_rate", "epochs", "seed"};
  CHECK(nearest_name("bacth", keys) == "batch");
  CHECK(nearest_name("epoch", keys) == "epochs");
  CHECK(nearest_name("learning_rat", keys) == "learning_rate");
  CHECK(nearest_name("zzzzzzzz", keys).empty());
}
