// How a training command becomes a data-parallel job. `--world N` typed in a shell starts N
// local ranks of the very same command line on loopback and waits for them; each rank (it
// has RANK set), or a process started by srun or by hand with RANK/WORLD_SIZE/MASTER_*,
// joins the job. Ranks other than 0 print only warnings and errors.
#pragma once

#include <memory>

#include "distributed/distributed_settings.hpp"
#include "distributed/rendezvous.hpp"

namespace tinct {

class DataParallel;

// True when this process was asked for `world` > 1 local ranks and is not itself one: it
// runs them (this program, this command line) and returns once all have ended well;
// a failed rank fails it. False: the caller goes on as a process of the job (or alone).
bool run_as_local_ranks(int world);

// Where this process sits in the job the environment describes (rank 0 of 1 when alone),
// for commands whose ranks work on their own. For more than one rank: ranks other than 0
// print only warnings and errors, and the compute threads are set as join_data_parallel says.
// `default_port` applies when MASTER_PORT is not set.
Rendezvous take_place(int default_port, int world_flag, int requested);

// This process's part in the job the environment describes (null for one process). Its
// compute threads: `requested` (--threads or train.threads; 0 = all cores, or Slurm's
// SLURM_CPUS_PER_TASK), divided among the ranks that share this machine's loopback.
// `world_flag` (--world, 0 when not given) must agree with WORLD_SIZE.
std::shared_ptr<DataParallel> join_data_parallel(const DistributedSettings& settings, int world_flag, int requested);

}  // namespace tinct
