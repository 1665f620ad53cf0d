#include <catch2/catch.hpp>

#include "temp_folder.hpp"
#include "util/atomic_file.hpp"
#include "util/error.hpp"

namespace fs = std::filesystem;
using tinct::testing::TempFolder;
using tinct::testing::read_text;

TEST_CASE("atomic write replaces the file and leaves no temporary behind") {
  TempFolder folder;
  const auto target = folder / "run.yaml";
  tinct::write_file_atomic(target, "first\n");
  tinct::write_file_atomic(target, "second\n");
  CHECK(read_text(target) == "second\n");
  int entries = 0;
  for ([[maybe_unused]] const auto& e : fs::directory_iterator(folder.path())) ++entries;
  CHECK(entries == 1);
}

TEST_CASE("atomic write into a missing folder fails with the path") {
  TempFolder folder;
  try {
    tinct::write_file_atomic(folder / "missing" / "x.txt", "x");
    FAIL("expected an error");
  } catch (const tinct::Error& e) {
    CHECK(std::string(e.what()).find("missing/x.txt") != std::string::npos);
    CHECK(e.exit_code() == 1);
  }
}

TEST_CASE("a partial folder is renamed on commit and removed when abandoned") {
  TempFolder folder;
  const auto store = folder / "store";
  {
    tinct::PartialFolder partial(store, false);
    std::ofstream(partial.path() / "a.bin") << "x";
    CHECK(fs::exists(folder / "store.partial"));
  }
  CHECK_FALSE(fs::exists(folder / "store.partial"));
  CHECK_FALSE(fs::exists(store));
  {
    tinct::PartialFolder partial(store, false);
    std::ofstream(partial.path() / "a.bin") << "x";
    partial.commit();
  }
  CHECK(fs::exists(store / "a.bin"));
  CHECK_THROWS_AS(tinct::PartialFolder(store, false), tinct::Error);
  tinct::PartialFolder replaced(store, true);
  replaced.commit();
  CHECK_FALSE(fs::exists(store / "a.bin"));
}
