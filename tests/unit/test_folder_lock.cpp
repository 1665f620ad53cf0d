// FolderLock and the store's partial folder between real processes (fork): a live
// holder refuses a second writer, a killed holder's lock file is taken over.
#include <signal.h>
#include <sys/wait.h>
#include <unistd.h>

#include <catch2/catch.hpp>

#include <fstream>
#include <functional>
#include <memory>

#include "temp_folder.hpp"
#include "util/atomic_file.hpp"
#include "util/error.hpp"
#include "util/folder_lock.hpp"
#include "util/log.hpp"

namespace fs = std::filesystem;
using Catch::Matchers::Contains;
using tinct::testing::read_text;
using tinct::testing::TempFolder;

namespace {

// A child process that holds a lock until the parent says go: `ready` tells the
// parent it holds it, a byte on `go` lets it release and exit 0.
struct LockHolder {
  pid_t pid = -1;
  int ready[2] = {-1, -1};
  int go[2] = {-1, -1};

  template <typename TakeLock>
  explicit LockHolder(TakeLock take_lock) {
    REQUIRE(::pipe(ready) == 0);
    REQUIRE(::pipe(go) == 0);
    pid = ::fork();
    REQUIRE(pid >= 0);
    if (pid == 0) {
      ::close(ready[0]);
      ::close(go[1]);
      int code = 0;
      try {
        auto held = take_lock();
        char byte = 1;
        if (::write(ready[1], &byte, 1) != 1) ::_exit(5);
        if (::read(go[0], &byte, 1) != 1) ::_exit(6);
      } catch (...) {
        code = 7;
      }
      ::_exit(code);
    }
    ::close(ready[1]);  // so that a child that dies early ends the read below
    ::close(go[0]);
    char byte = 0;
    REQUIRE(::read(ready[0], &byte, 1) == 1);
  }

  int release_and_wait() {
    char byte = 1;
    REQUIRE(::write(go[1], &byte, 1) == 1);
    int status = 0;
    ::waitpid(pid, &status, 0);
    ::close(ready[0]);
    ::close(go[1]);
    return WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  }
};

std::string refusal(const std::function<void()>& take) {
  try {
    take();
  } catch (const tinct::Error& e) {
    CHECK(e.exit_code() == 1);
    return e.what();
  }
  return "";
}

}  // namespace

TEST_CASE("folder lock: a live holder refuses a second process, naming the folder and its pid") {
  TempFolder folder;
  const auto run = folder / "run";
  const auto lock_file = run / "lock";
  LockHolder holder([&] { return std::make_unique<tinct::FolderLock>(run, lock_file); });
  CHECK(read_text(lock_file) == std::to_string(holder.pid) + "\n");

  const std::string message = refusal([&] { tinct::FolderLock second(run, lock_file); });
  CHECK_THAT(message, Contains(run.string() + " is in use by another tinct process"));
  CHECK_THAT(message, Contains("pid " + std::to_string(holder.pid)));
  CHECK_THAT(message, Contains("wait for it to finish"));

  CHECK(holder.release_and_wait() == 0);
  CHECK_FALSE(fs::exists(lock_file));  // the holder removed it
  tinct::FolderLock after(run, lock_file);
  CHECK(after.stale_holder() == 0);
  CHECK(read_text(lock_file) == std::to_string(::getpid()) + "\n");
  after.release();
  CHECK_FALSE(fs::exists(lock_file));
}

TEST_CASE("folder lock: a lock file left by a killed process is stale and taken over with a log line") {
  TempFolder folder;
  const auto store = folder / "a.pairs";
  const auto lock_file = tinct::lock_file_beside(store);
  CHECK(lock_file == folder / "a.pairs.lock");
  const pid_t child = ::fork();
  REQUIRE(child >= 0);
  if (child == 0) {
    tinct::FolderLock held(store, lock_file);
    ::raise(SIGKILL);  // no destructor runs: the file stays, the kernel drops the lock
    ::_exit(1);
  }
  int status = 0;
  ::waitpid(child, &status, 0);
  REQUIRE(WIFSIGNALED(status));
  REQUIRE(read_text(lock_file) == std::to_string(child) + "\n");

  const auto log_file = folder / "log.txt";
  tinct::log::set_file(log_file);
  {
    tinct::FolderLock taken(store, lock_file);
    CHECK(taken.stale_holder() == child);
    CHECK(read_text(lock_file) == std::to_string(::getpid()) + "\n");
  }
  tinct::log::close_file();
  CHECK_THAT(read_text(log_file), Contains("taking over the lock on " + store.string() + " left by process " +
                                           std::to_string(child) + ", which has ended"));
  CHECK_FALSE(fs::exists(lock_file));
}

TEST_CASE("folder lock: a store's partial folder is refused to a second writer and left intact") {
  TempFolder folder;
  const auto store = folder / "a.pairs";
  const auto partial = folder / "a.pairs.partial";
  LockHolder writer([&] {
    auto building = std::make_unique<tinct::PartialFolder>(store, /*replace=*/true);
    std::ofstream(building->path() / "bands.bin") << "first writer's chips";
    return building;
  });
  const std::string message = refusal([&] { tinct::PartialFolder second(store, /*replace=*/true); });
  CHECK_THAT(message, Contains(store.string() + " is in use by another tinct process (pid " +
                               std::to_string(writer.pid)));
  CHECK_THAT(message, Contains("choose another output"));
  CHECK(read_text(partial / "bands.bin") == "first writer's chips");  // not removed by the refused one
  CHECK(writer.release_and_wait() == 0);
  CHECK_FALSE(fs::exists(partial));  // the first abandoned it (no commit)
  CHECK_FALSE(fs::exists(tinct::lock_file_beside(store)));
}
