// Where a process sits in a data-parallel job, without LibTorch: Slurm host lists, the
// environment variables, shard slices, the free-port probe and the local launcher with a
// real shell as its rank program (exit codes, environment, signals, the failed rank named).
#include <signal.h>
#include <unistd.h>

#include <catch2/catch.hpp>

#include <chrono>
#include <filesystem>
#include <thread>

#include "distributed/distributed_settings.hpp"
#include "distributed/free_port.hpp"
#include "distributed/host_list.hpp"
#include "distributed/local_launcher.hpp"
#include "distributed/rendezvous.hpp"
#include "distributed/route_address.hpp"
#include "distributed/shard.hpp"
#include "temp_folder.hpp"
#include "util/config_node.hpp"
#include "util/error.hpp"

using Catch::Matchers::Contains;
using tinct::testing::read_text;
using tinct::testing::TempFolder;
using Hosts = std::vector<std::string>;

// Expected expansions follow Slurm's documented host-list syntax (scontrol show hostnames):
// ranges keep the zero padding of their first number; from memory, checked by hand.
TEST_CASE("Slurm host lists expand in order with their zero padding") {
  CHECK(tinct::expand_host_list("node[03-05,09]", "L") == Hosts{"node03", "node04", "node05", "node09"});
  CHECK(tinct::expand_host_list("node[08-10]", "L") == Hosts{"node08", "node09", "node10"});
  CHECK(tinct::expand_host_list("n[8-10]", "L") == Hosts{"n8", "n9", "n10"});
  CHECK(tinct::expand_host_list("login2", "L") == Hosts{"login2"});
  CHECK(tinct::expand_host_list("a[1-2],b,c[7]", "L") == Hosts{"a1", "a2", "b", "c7"});
  CHECK(tinct::expand_host_list("cn[001-002]-ib", "L") == Hosts{"cn001-ib", "cn002-ib"});
  CHECK(tinct::expand_host_list("r[1-2]n[1-2]", "L") == Hosts{"r1n1", "r1n2", "r2n1", "r2n2"});
  CHECK(tinct::expand_host_list("node-1,node-2", "L") == Hosts{"node-1", "node-2"});
  CHECK(tinct::first_host("node[03-05,09],login2", "L") == "node03");
  CHECK(tinct::first_host("gpu7,node[1-2]", "L") == "gpu7");
}

TEST_CASE("malformed host lists are usage errors naming the variable and the text") {
  for (const std::string bad : {"", "node[1-", "node]1[", "node[5-3]", "node[a-b]", "a,,b", "node[1-2", "n[[1]]"}) {
    INFO(bad);
    try {
      tinct::expand_host_list(bad, "SLURM_JOB_NODELIST");
      FAIL("accepted");
    } catch (const tinct::Error& error) {
      CHECK(error.exit_code() == 2);
      CHECK_THAT(error.what(), Contains("SLURM_JOB_NODELIST = '" + bad + "'"));
    }
  }
  CHECK_THROWS_WITH(tinct::first_host("node[5-3]", "SLURM_JOB_NODELIST"), Contains("runs backwards"));
}

TEST_CASE("no rank variables: a single process") {
  const tinct::Rendezvous place = tinct::read_rendezvous({{"HOME", "/root"}}, 29500);
  CHECK(place.single());
  CHECK(place.rank == 0);
  CHECK(place.source == "single process");
}

TEST_CASE("RANK, WORLD_SIZE, MASTER_ADDR and MASTER_PORT place the process") {
  tinct::Environment environment{
      {"RANK", "2"}, {"WORLD_SIZE", "4"}, {"MASTER_ADDR", "10.0.0.5"}, {"MASTER_PORT", "29617"}};
  tinct::Rendezvous place = tinct::read_rendezvous(environment, 29500);
  CHECK(place.rank == 2);
  CHECK(place.world == 4);
  CHECK(place.master_address == "10.0.0.5");
  CHECK(place.master_port == 29617);
  CHECK_FALSE(place.on_loopback());
  environment.erase("MASTER_PORT");
  CHECK(tinct::read_rendezvous(environment, 29444).master_port == 29444);  // the configured port
  CHECK(tinct::read_rendezvous({{"RANK", "0"}, {"WORLD_SIZE", "1"}}, 1).single());
  CHECK(tinct::read_rendezvous({{"RANK", "1"}, {"WORLD_SIZE", "2"}, {"MASTER_ADDR", "127.0.0.1"}}, 1).on_loopback());
}

TEST_CASE("a missing or malformed rank variable is a usage error naming it") {
  const auto message = [](const tinct::Environment& environment) {
    try {
      tinct::read_rendezvous(environment, 29500);
    } catch (const tinct::Error& error) {
      CHECK(error.exit_code() == 2);
      return std::string(error.what());
    }
    return std::string("accepted");
  };
  CHECK_THAT(message({{"RANK", "1"}}), Contains("WORLD_SIZE is not set but RANK is"));
  CHECK_THAT(message({{"WORLD_SIZE", "2"}}), Contains("RANK is not set"));
  CHECK_THAT(message({{"RANK", "1"}, {"WORLD_SIZE", "2"}}), Contains("MASTER_ADDR is not set but WORLD_SIZE is 2"));
  CHECK_THAT(message({{"RANK", "2"}, {"WORLD_SIZE", "2"}, {"MASTER_ADDR", "h"}}),
             Contains("RANK = '2' must be a whole number from 0 to 1"));
  CHECK_THAT(message({{"RANK", "x"}, {"WORLD_SIZE", "2"}, {"MASTER_ADDR", "h"}}), Contains("RANK = 'x'"));
  CHECK_THAT(message({{"RANK", "0"}, {"WORLD_SIZE", "0"}}), Contains("WORLD_SIZE = '0'"));
  CHECK_THAT(message({{"RANK", "0"}, {"WORLD_SIZE", "2"}, {"MASTER_ADDR", "h"}, {"MASTER_PORT", "70000"}}),
             Contains("MASTER_PORT = '70000' must be a whole number from 1 to 65535"));
}

TEST_CASE("Slurm's task variables place the process, rank 0 on the first host of the node list") {
  tinct::Environment environment{{"SLURM_PROCID", "5"}, {"SLURM_NTASKS", "8"},
                                 {"SLURM_JOB_NODELIST", "cn[07-08,11],login1"}};
  tinct::Rendezvous place = tinct::read_rendezvous(environment, 29511);
  CHECK(place.rank == 5);
  CHECK(place.world == 8);
  CHECK(place.master_address == "cn07");
  CHECK(place.master_port == 29511);
  CHECK(place.source == "Slurm");
  environment["MASTER_PORT"] = "30001";  // explicit variables win
  CHECK(tinct::read_rendezvous(environment, 29511).master_port == 30001);
  environment["RANK"] = "1";
  environment["WORLD_SIZE"] = "2";
  environment["MASTER_ADDR"] = "127.0.0.1";
  CHECK(tinct::read_rendezvous(environment, 29511).world == 2);  // RANK/WORLD_SIZE before Slurm's
  CHECK(tinct::read_rendezvous({{"SLURM_PROCID", "0"}, {"SLURM_NTASKS", "1"}}, 1).single());
  CHECK_THROWS_WITH(tinct::read_rendezvous({{"SLURM_PROCID", "1"}, {"SLURM_NTASKS", "2"}}, 1),
                    Contains("SLURM_JOB_NODELIST is not set but SLURM_NTASKS is 2"));
  CHECK_THROWS_WITH(tinct::read_rendezvous({{"SLURM_NTASKS", "2"}, {"SLURM_JOB_NODELIST", "a"}}, 1),
                    Contains("SLURM_PROCID is not set"));
}

TEST_CASE("shard slices are disjoint, cover the list and differ in size by at most one") {
  for (std::int64_t count : {0, 1, 5, 10, 11}) {
    for (int world : {1, 2, 3, 4}) {
      std::int64_t next = 0, smallest = count, largest = 0;
      for (int rank = 0; rank < world; ++rank) {
        const tinct::ShardRange range = tinct::shard_range(count, rank, world);
        CHECK(range.begin == next);
        next = range.end;
        smallest = std::min(smallest, range.size());
        largest = std::max(largest, range.size());
      }
      CHECK(next == count);
      CHECK(largest - smallest <= 1);
    }
  }
  CHECK(tinct::shard_range(10, 1, 4).begin == 3);  // sizes 3 3 2 2
  CHECK(tinct::shard_range(10, 3, 4).size() == 2);
}

TEST_CASE("a free loopback port and the local address towards loopback") {
  const int port = tinct::free_loopback_port();
  CHECK(port > 0);
  CHECK(port < 65536);
  CHECK(tinct::local_address_towards("127.0.0.1") == "127.0.0.1");
  CHECK_THROWS_WITH(tinct::local_address_towards("no-such-host.invalid"),
                    Contains("'no-such-host.invalid' does not resolve"));
}

TEST_CASE("the local launcher runs every rank with its variables and returns when all succeed") {
  TempFolder folder;
  tinct::LocalLaunch launch;
  launch.world = 3;
  launch.program = "/bin/sh";
  launch.arguments = {"-c", "echo \"$RANK $WORLD_SIZE $MASTER_ADDR $MASTER_PORT\" > \"$0/rank$RANK\"",
                      folder.path().string()};
  launch.port = 29999;
  tinct::run_local_ranks(launch);
  for (int rank = 0; rank < 3; ++rank) {
    CHECK(read_text(folder / ("rank" + std::to_string(rank))) == std::to_string(rank) + " 3 127.0.0.1 29999\n");
  }
  CHECK(tinct::threads_per_rank(8, 3) == 2);
  CHECK(tinct::threads_per_rank(2, 4) == 1);
}

TEST_CASE("the local launcher names the rank that failed first and how the others ended") {
  tinct::LocalLaunch launch;
  launch.world = 3;
  launch.program = "/bin/sh";
  // rank 1 is killed at once, the others end later (rank 2 failing, rank 0 fine).
  launch.arguments = {"-c", "if [ $RANK = 1 ]; then kill -KILL $$; fi; sleep 0.3; exit $RANK"};
  try {
    tinct::run_local_ranks(launch);
    FAIL("no failure reported");
  } catch (const tinct::Error& error) {
    CHECK(error.exit_code() == 1);
    CHECK_THAT(error.what(), Contains("local rank 1 of 3 failed first: it was killed by SIGKILL"));
    CHECK_THAT(error.what(), Contains("rank 0 exited with status 0"));
    CHECK_THAT(error.what(), Contains("rank 2 exited with status 2"));
    CHECK_THAT(error.what(), Contains("--resume"));
  }
  launch.arguments = {"-c", "exit 2"};  // every rank refuses its config: a usage error
  CHECK_THROWS_AS(tinct::run_local_ranks(launch), tinct::Error);
  try {
    tinct::run_local_ranks(launch);
  } catch (const tinct::Error& error) {
    CHECK(error.exit_code() == 2);
  }
}

TEST_CASE("the local launcher forwards SIGTERM to every rank exactly once") {
  TempFolder folder;
  tinct::LocalLaunch launch;
  launch.world = 2;
  launch.program = "/bin/sh";
  launch.arguments = {"-c",
                      "trap 'echo TERM >> \"$0/got$RANK\"; exit 0' TERM; touch \"$0/ready$RANK\"; "
                      "while :; do sleep 0.05; done",
                      folder.path().string()};
  std::thread sender([&] {  // SIGTERM to this process, as a scheduler would send it, once both ranks listen
    const auto ready = [&] {
      return std::filesystem::exists(folder / "ready0") && std::filesystem::exists(folder / "ready1");
    };
    for (int i = 0; i < 400 && !ready(); ++i) {
      std::this_thread::sleep_for(std::chrono::milliseconds(25));
    }
    ::kill(::getpid(), SIGTERM);
  });
  tinct::run_local_ranks(launch);  // both ranks end with status 0 after their trap
  sender.join();
  CHECK(read_text(folder / "got0") == "TERM\n");
  CHECK(read_text(folder / "got1") == "TERM\n");
}

TEST_CASE("the local launcher stops ranks that outlive a failed one by more than the grace") {
  tinct::LocalLaunch launch;
  launch.world = 2;
  launch.program = "/bin/sh";
  launch.arguments = {"-c", "if [ $RANK = 0 ]; then exit 1; fi; kill -STOP $$; sleep 60"};
  launch.grace_seconds = 1;
  try {
    tinct::run_local_ranks(launch);
    FAIL("no failure reported");
  } catch (const tinct::Error& error) {
    CHECK_THAT(error.what(), Contains("local rank 0 of 2 failed first: it exited with status 1"));
    CHECK_THAT(error.what(), Contains("rank 1 was killed by SIGTERM"));
  }
}

TEST_CASE("the distributed section of a config: defaults, values and a misspelt key") {
  const auto settings_of = [](const std::string& text) {
    return tinct::read_distributed_settings(
        tinct::ConfigNode::from_text(text, "p.yaml", ".").section("distributed"));
  };
  const tinct::DistributedSettings defaults = settings_of("config: pretrain\n");
  CHECK(defaults.port == 29500);
  CHECK(defaults.timeout_seconds == 300);
  CHECK(defaults.bucket_bytes == 25u * 1024 * 1024);
  const tinct::DistributedSettings set = settings_of("distributed: {port: 31000, timeout: 60, bucket_mb: 4}\n");
  CHECK(set.port == 31000);
  CHECK(set.timeout_seconds == 60);
  CHECK(set.bucket_bytes == 4u * 1024 * 1024);
  CHECK_THROWS_WITH(settings_of("distributed: {timeuot: 60}\n"), Contains("timeout"));
  CHECK_THROWS_WITH(settings_of("distributed: {port: 0}\n"), Contains("distributed.port"));
}
