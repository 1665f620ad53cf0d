// Atomic files and folders: replacement, what a kill leaves and how the next writer
// recovers it, errors that name the file, and a real full file system (a tmpfs in a
// user and mount namespace of a child process).
#include <sched.h>
#include <sys/mount.h>
#include <sys/wait.h>
#include <unistd.h>

#include <catch2/catch.hpp>

#include <fstream>

#include "temp_folder.hpp"
#include "util/atomic_file.hpp"
#include "util/error.hpp"
#include "util/log.hpp"

namespace fs = std::filesystem;
using Catch::Matchers::Contains;
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

TEST_CASE("a failed rename reports the rename's own error and removes the written file") {
  TempFolder folder;
  const auto written = folder.write("written.tmp", "x");
  try {
    tinct::commit_file(written, folder / "missing" / "target.txt");
    FAIL("expected an error");
  } catch (const tinct::Error& e) {
    CHECK_THAT(e.what(), Contains("missing/target.txt") && Contains("No such file or directory"));
    CHECK_THAT(e.what(), !Contains("Success"));
  }
  CHECK_FALSE(fs::exists(written));
}

TEST_CASE("an atomic file destroyed before commit leaves neither target nor temporary") {
  TempFolder folder;
  {
    tinct::AtomicFile file(folder / "model.bin");
    file.write("half of it");
  }
  CHECK(fs::is_empty(folder.path()));
}

TEST_CASE("replacing a folder moves the old one aside, renames the new one in and deletes the old") {
  TempFolder folder;
  const auto store = folder / "a.pairs";
  {
    tinct::PartialFolder first(store, false);
    std::ofstream(first.path() / "old.bin") << "old";
    first.commit();
  }
  tinct::PartialFolder second(store, true);
  std::ofstream(second.path() / "new.bin") << "new";
  CHECK(fs::exists(store / "old.bin"));  // untouched until commit
  second.commit();
  CHECK(fs::exists(store / "new.bin"));
  CHECK_FALSE(fs::exists(store / "old.bin"));
  CHECK_FALSE(fs::exists(tinct::aside_folder_of(store)));
  CHECK_FALSE(fs::exists(tinct::partial_folder_of(store)));
}

TEST_CASE("an old folder left aside by a killed replacement is put back, or removed when the new one is in") {
  TempFolder folder;
  const auto store = folder / "a.pairs";
  const auto aside = tinct::aside_folder_of(store);
  const auto log_file = folder / "log.txt";
  tinct::log::set_file(log_file);
  // Killed between the renames: no a.pairs, the old one in a.pairs.previous.
  folder.write("a.pairs.previous/old.bin", "old");
  folder.write("a.pairs.partial/new.bin", "new");
  CHECK_THROWS_WITH(tinct::PartialFolder(store, false), Contains("a.pairs already exists"));
  CHECK(read_text(store / "old.bin") == "old");
  CHECK_FALSE(fs::exists(aside));
  CHECK_FALSE(fs::exists(tinct::partial_folder_of(store)));
  // Killed while deleting the old one: both there; the new one stays.
  folder.write("a.pairs.previous/old.bin", "old");
  { tinct::PartialFolder again(store, true); }
  CHECK(read_text(store / "old.bin") == "old");
  CHECK_FALSE(fs::exists(aside));
  tinct::log::close_file();
  const std::string log = read_text(log_file);
  CHECK_THAT(log, Contains("restoring " + store.string() + " from " + aside.string()));
  CHECK_THAT(log, Contains("removing " + (folder / "a.pairs.partial").string() + ", left by an interrupted run"));
  CHECK_THAT(log, Contains("removing " + aside.string() + ": an interrupted replacement had already put the new"));
}

namespace {

// In a child process: a user and mount namespace of its own with a 64 KiB tmpfs on
// `mount_point`, so the write below meets a full disk. Exit codes: 0 the checks
// passed, 10+ a failed check, 77 the namespace or mount is not allowed here.
int write_onto_full_tmpfs(const fs::path& mount_point) {
  const uid_t uid = ::getuid();
  const gid_t gid = ::getgid();
  if (::unshare(CLONE_NEWUSER | CLONE_NEWNS) != 0) return 77;
  std::ofstream("/proc/self/setgroups") << "deny";
  std::ofstream("/proc/self/uid_map") << "0 " << uid << " 1";
  std::ofstream("/proc/self/gid_map") << "0 " << gid << " 1";
  if (::mount(nullptr, "/", nullptr, MS_REC | MS_PRIVATE, nullptr) != 0) return 77;
  if (::mount("tmpfs", mount_point.c_str(), "tmpfs", 0, "size=64k") != 0) return 77;
  const auto target = mount_point / "metrics.json";
  try {
    tinct::write_file_atomic(target, std::string(256 * 1024, 'x'));
    return 10;
  } catch (const tinct::Error& e) {
    const std::string message = e.what();
    if (message.find("cannot write " + target.string() + ": No space left on device") == std::string::npos) return 11;
    if (message.find("writing 262144 bytes") == std::string::npos) return 12;
    if (message.find("free on the file system of " + mount_point.string()) == std::string::npos) return 13;
  }
  if (!fs::is_empty(mount_point)) return 14;  // no temporary left
  return 0;
}

}  // namespace

TEST_CASE("an atomic write onto a full file system names the file, the bytes and the free space") {
  TempFolder folder;
  const auto mount_point = folder / "small";
  fs::create_directories(mount_point);
  const pid_t child = ::fork();
  REQUIRE(child >= 0);
  if (child == 0) ::_exit(write_onto_full_tmpfs(mount_point));
  int status = 0;
  ::waitpid(child, &status, 0);
  REQUIRE(WIFEXITED(status));
  if (WEXITSTATUS(status) == 77) {
    WARN("skipped: this machine allows no user namespace with a tmpfs mount (unshare or mount refused)");
    return;
  }
  CHECK(WEXITSTATUS(status) == 0);  // 10+: see write_onto_full_tmpfs
}
