#include <catch2/catch.hpp>

#include <signal.h>
#include <sys/wait.h>
#include <unistd.h>
#include <yaml-cpp/yaml.h>

#include "runs/blas_probe.hpp"
#include "runs/run_folder.hpp"
#include "runs/torch_runtime.hpp"
#include "temp_folder.hpp"
#include "util/error.hpp"
#include "util/sha256.hpp"

using Catch::Matchers::Contains;
using tinct::RunFolder;
using tinct::RunStatus;
using tinct::testing::TempFolder;

TEST_CASE("a run folder records config, hash, status, versions, threads and BLAS") {
  TempFolder folder;
  const auto path = folder / "runs" / "first";
  {
    RunFolder run(path, {});
    const std::string hash = run.write_config("config: pretrain\nseed: 7\n");
    CHECK(hash == tinct::sha256_hex("config: pretrain\nseed: 7\n"));
    run.write_status(RunStatus::running, 7);
    CHECK(RunFolder::recorded_status(path) == "running");
    run.write_status(RunStatus::done, 7);
  }
  const YAML::Node run_yaml = YAML::LoadFile((path / "run.yaml").string());
  CHECK(run_yaml["status"].as<std::string>() == "done");
  CHECK(run_yaml["seed"].as<int>() == 7);
  CHECK(run_yaml["threads"].as<int>() == tinct::threads_in_use());
  CHECK(run_yaml["versions"]["libtorch"].as<std::string>() == tinct::libtorch_version());
  CHECK_FALSE(run_yaml["config_hash"].as<std::string>().empty());
  CHECK(std::filesystem::exists(path / "log.txt"));
  CHECK(std::filesystem::exists(path / "config.resolved.yaml"));
}

TEST_CASE("a finished run is not overwritten without force, and force starts over") {
  TempFolder folder;
  const auto path = folder / "run";
  { RunFolder(path, {}).write_status(RunStatus::done, 1); }
  try {
    RunFolder again(path, {});
    FAIL("expected a refusal");
  } catch (const tinct::Error& e) {
    CHECK_THAT(e.what(), Contains("exists (status: done)"));
    CHECK_THAT(e.what(), Contains("--force"));
    CHECK(e.exit_code() == 2);
  }
  {
    RunFolder forced(path, {/*force=*/true, /*resume=*/false});
    // The new run is built beside the old one, which stays whole until the new one ends.
    CHECK(forced.path() == folder / "run.partial");
    CHECK_FALSE(std::filesystem::exists(forced.path() / "run.yaml"));
    CHECK(std::filesystem::exists(path / "run.yaml"));
    forced.write_status(RunStatus::stopped, 2);
    forced.finish_replacement();
    CHECK(forced.path() == path);
    CHECK(std::filesystem::exists(path / "lock"));
  }
  CHECK(YAML::LoadFile((path / "run.yaml").string())["seed"].as<int>() == 2);
  CHECK_FALSE(std::filesystem::exists(folder / "run.partial"));
  CHECK_FALSE(std::filesystem::exists(folder / "run.previous"));
  CHECK_FALSE(std::filesystem::exists(path / "lock"));
}

TEST_CASE("a replacement killed between its renames is put back, and a killed attempt is cleared") {
  TempFolder folder;
  const auto path = folder / "run";
  { RunFolder(path, {}).write_status(RunStatus::done, 1); }
  // A kill after the old run moved aside and before the new one moved in.
  std::filesystem::rename(path, folder / "run.previous");
  std::filesystem::create_directories(folder / "run.partial" / "checkpoints");
  {
    RunFolder resumed(path, {/*force=*/false, /*resume=*/true});
    CHECK(YAML::LoadFile((path / "run.yaml").string())["seed"].as<int>() == 1);
    CHECK_FALSE(std::filesystem::exists(folder / "run.previous"));
    CHECK_FALSE(std::filesystem::exists(folder / "run.partial"));
  }
  // A kill after both renames: the new run is in place and the old one goes.
  std::filesystem::create_directories(folder / "run.previous" / "checkpoints");
  { RunFolder reopened(path, {/*force=*/false, /*resume=*/true}); }
  CHECK_FALSE(std::filesystem::exists(folder / "run.previous"));
  CHECK(std::filesystem::exists(path / "run.yaml"));
}

TEST_CASE("temporaries left by a killed write are removed when the run is opened") {
  TempFolder folder;
  const auto path = folder / "run";
  { RunFolder(path, {}).write_status(RunStatus::running, 1); }
  std::filesystem::create_directories(path / "checkpoints");
  const auto orphan = path / "checkpoints" / ".step-00000004.pt.tmp.12345";
  folder.write("run/checkpoints/.step-00000004.pt.tmp.12345", "half a checkpoint");
  folder.write("run/checkpoints/step-00000002.pt", "kept");
  { RunFolder resumed(path, {/*force=*/false, /*resume=*/true}); }
  CHECK_FALSE(std::filesystem::exists(orphan));
  CHECK(std::filesystem::exists(path / "checkpoints" / "step-00000002.pt"));
  CHECK_THAT(tinct::testing::read_text(path / "log.txt"), Contains("a temporary file left by an interrupted write"));
}

TEST_CASE("a run killed before its first checkpoint is not sent to --resume") {
  TempFolder folder;
  const auto path = folder / "run";
  { RunFolder(path, {}).write_status(RunStatus::running, 1); }
  try {
    RunFolder again(path, {});
    FAIL("expected a refusal");
  } catch (const tinct::Error& e) {
    CHECK_THAT(e.what(), Contains("no checkpoint to continue from") && Contains("--force"));
    CHECK_THAT(e.what(), !Contains("--resume"));
  }
}

TEST_CASE("a second process cannot open a run that is held") {
  TempFolder folder;
  const auto path = folder / "held";
  RunFolder run(path, {});
  const pid_t child = ::fork();
  if (child == 0) {
    try {
      RunFolder second(path, {true, false});
      ::_exit(0);  // opened: the lock failed
    } catch (const tinct::Error& e) {
      ::_exit(std::string(e.what()).find("in use by another tinct process") != std::string::npos ? 3 : 4);
    }
  }
  int status = 0;
  ::waitpid(child, &status, 0);
  CHECK(WIFEXITED(status));
  CHECK(WEXITSTATUS(status) == 3);
}

TEST_CASE("a run's lock file is removed when the run ends") {
  TempFolder folder;
  const auto path = folder / "ended";
  {
    RunFolder run(path, {});
    CHECK(std::filesystem::exists(path / "lock"));
  }
  CHECK_FALSE(std::filesystem::exists(path / "lock"));
}

TEST_CASE("a lock left by a SIGKILLed run is taken over, and log.txt says so") {
  TempFolder folder;
  const auto path = folder / "killed";
  const pid_t child = ::fork();
  if (child == 0) {
    RunFolder run(path, {});
    run.write_status(RunStatus::running, 1);
    ::raise(SIGKILL);  // no destructor runs: the lock file stays, the kernel drops the lock
    ::_exit(1);
  }
  int status = 0;
  ::waitpid(child, &status, 0);
  REQUIRE(WIFSIGNALED(status));
  REQUIRE(std::filesystem::exists(path / "lock"));
  {
    RunFolder resumed(path, {/*force=*/false, /*resume=*/true});
    resumed.write_status(RunStatus::done, 1);
  }
  CHECK_THAT(tinct::testing::read_text(path / "log.txt"),
             Contains("took over the lock left by process " + std::to_string(child) + ", which has ended"));
  CHECK_FALSE(std::filesystem::exists(path / "lock"));
}

TEST_CASE("BLAS family is read from library paths") {
  CHECK(tinct::blas_family("/usr/lib/x86_64-linux-gnu/openblas-pthread/libblas.so.3") == "openblas");
  CHECK(tinct::blas_family("/usr/lib/x86_64-linux-gnu/blas/libblas.so.3.11.0") == "reference");
  // This process links LibTorch, so some BLAS is mapped; setup.sh installs OpenBLAS.
  CHECK_FALSE(tinct::blas_in_use().library.empty());
}

TEST_CASE("threads are set as asked, and 0 means all cores") {
  CHECK(tinct::configure_threads(1) == 1);
  CHECK(tinct::configure_threads(0) >= 1);
}
