// Where this process sits in a data-parallel job, read from the environment: RANK,
// WORLD_SIZE, MASTER_ADDR and MASTER_PORT (set by `--world N` on one machine, or by hand on
// several), else Slurm's SLURM_PROCID, SLURM_NTASKS and the first host of
// SLURM_JOB_NODELIST. Neither: one process, world 1. Nothing is connected here.
#pragma once

#include <map>
#include <string>

namespace tinct {

using Environment = std::map<std::string, std::string>;

struct Rendezvous {
  int rank = 0;
  int world = 1;
  std::string master_address;  // rank 0's host; it serves the rendezvous store
  int master_port = 0;
  std::string interface;       // GLOO_SOCKET_IFNAME: the network interface peers reach us on
  std::string source;          // "single process", "RANK/WORLD_SIZE" or "Slurm", for logs

  bool single() const { return world == 1; }
  bool on_loopback() const;    // MASTER_ADDR is this machine's loopback (local ranks)
};

// This process's environment.
Environment process_environment();

// `default_port` applies when MASTER_PORT is not set. Fails (usage) naming the variable that
// is missing or malformed.
Rendezvous read_rendezvous(const Environment& environment, int default_port);

}  // namespace tinct
