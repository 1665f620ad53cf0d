// Running commands of this same binary as child processes, at most N at once: a study's
// fine-tunes, so that one failing run cannot take the study down and `parallel:` is just
// more children. Each child's stdout and stderr go to its own log file; a child is sent
// SIGTERM if the study process dies (it then checkpoints and stops, as on Ctrl-C).
#pragma once

#include <cstddef>
#include <filesystem>
#include <functional>
#include <optional>
#include <string>
#include <vector>

namespace tinct {

struct ChildJob {
  std::vector<std::string> arguments;  // after the program name
  std::filesystem::path log;           // stdout and stderr
};

struct ChildExit {
  int code = 0;    // exit status, when it exited
  int signal = 0;  // the signal that ended it, else 0
  bool ok() const { return code == 0 && signal == 0; }
  std::string describe() const;  // "exit 1", "killed by signal 9"
};

// This process's executable (/proc/self/exe resolved).
std::filesystem::path self_executable();

// The next job to start, none when there are no more (asked only when there is room).
using NextChildJob = std::function<std::optional<ChildJob>()>;
using ChildFinished = std::function<void(std::size_t, const ChildExit&)>;

// Starts jobs as `next` hands them out, keeping `parallel` running; `finished(index, exit)`
// runs in this process as each ends (index: the job's place in the order handed out),
// while the others go on. `idle`, when given, runs every 100 ms while children run. If
// `finished`, `next` or `idle` throws, the running children get SIGTERM and are waited for
// before the error goes on. Children do not inherit the variables that place a process in
// a data-parallel job (RANK, WORLD_SIZE, MASTER_*, SLURM_PROCID, SLURM_NTASKS): each is a
// process of its own, whatever job the caller belongs to.
void run_children(const std::filesystem::path& program, const NextChildJob& next, int parallel,
                  const ChildFinished& finished, const std::function<void()>& idle = {});
// The same for a list of jobs, in order.
void run_children(const std::filesystem::path& program, const std::vector<ChildJob>& jobs, int parallel,
                  const ChildFinished& finished);

// The last line of `log` that holds "error" (what tinct printed before exiting), else its last line.
std::string last_error_line(const std::filesystem::path& log);

}  // namespace tinct
