// `--world N` on one machine: the same command run as N ranks of one data-parallel job on
// loopback, each a child process of this program with RANK, WORLD_SIZE, MASTER_ADDR and
// MASTER_PORT set. SIGINT, SIGTERM and SIGHUP reach every rank once (ranks get their own
// process group, so a terminal's Ctrl-C is not delivered twice); a rank whose launcher
// dies gets SIGTERM. Ranks it starts have RANK set, so they must not launch again.
#pragma once

#include <string>
#include <vector>

namespace tinct {

struct LocalLaunch {
  int world = 2;
  std::vector<std::string> arguments;  // each rank's command line after the program name
  std::string program = "/proc/self/exe";
  int port = 0;                        // 0: a free loopback port
  int grace_seconds = 360;             // after a rank fails, time the others get to stop on their own
};

// Returns when every rank exited with status 0. Otherwise fails naming the rank that failed
// first and how the others ended: usage (exit 2) when every failed rank exited 2, else runtime.
void run_local_ranks(const LocalLaunch& launch);

// Compute threads per rank when `total` threads are shared by `world` local ranks (at least 1).
int threads_per_rank(int total, int world);

}  // namespace tinct
