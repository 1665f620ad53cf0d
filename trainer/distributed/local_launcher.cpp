#include "distributed/local_launcher.hpp"

#include <signal.h>
#include <string.h>
#include <sys/prctl.h>
#include <sys/wait.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <chrono>
#include <thread>

#include "distributed/free_port.hpp"
#include "distributed/rendezvous.hpp"
#include "util/error.hpp"

namespace tinct {
namespace {

// The handler forwards to these; written only while the signals are blocked.
std::vector<pid_t>* forward_to = nullptr;
constexpr int kForwarded[] = {SIGINT, SIGTERM, SIGHUP};

extern "C" void forward_signal(int signal_number) {
  if (!forward_to) return;
  for (pid_t pid : *forward_to) {
    if (pid > 0) ::kill(pid, signal_number);
  }
}

struct RankProcess {
  pid_t pid = -1;
  bool running = false;
  int status = 0;
  int finish_order = -1;  // 0 for the first rank to end, ...
};

// argv and envp are built before fork: the child calls only async-signal-safe functions.
struct CommandLine {
  std::vector<std::string> strings;
  std::vector<char*> pointers;
  explicit CommandLine(std::vector<std::string> all) : strings(std::move(all)) {
    for (std::string& s : strings) pointers.push_back(s.data());
    pointers.push_back(nullptr);
  }
};

CommandLine rank_environment(int rank, int world, int port) {
  Environment environment = process_environment();
  environment["RANK"] = std::to_string(rank);
  environment["WORLD_SIZE"] = std::to_string(world);
  environment["MASTER_ADDR"] = "127.0.0.1";
  environment["MASTER_PORT"] = std::to_string(port);
  std::vector<std::string> entries;
  for (const auto& [name, value] : environment) entries.push_back(name + "=" + value);
  return CommandLine(std::move(entries));
}

pid_t start_rank(const LocalLaunch& launch, int rank, int port, const sigset_t& previous_mask) {
  std::vector<std::string> words{launch.program};
  words.insert(words.end(), launch.arguments.begin(), launch.arguments.end());
  CommandLine argv(std::move(words));
  CommandLine envp = rank_environment(rank, launch.world, port);
  const pid_t parent = ::getpid();
  const pid_t pid = ::fork();
  if (pid < 0) fail_runtime(std::string("cannot start local rank ") + std::to_string(rank) + ": " + strerror(errno));
  if (pid == 0) {
    ::setpgid(0, 0);
    ::prctl(PR_SET_PDEATHSIG, SIGTERM);
    if (::getppid() != parent) ::_exit(1);  // the launcher is already gone
    ::sigprocmask(SIG_SETMASK, &previous_mask, nullptr);
    ::execve(argv.pointers[0], argv.pointers.data(), envp.pointers.data());
    ::_exit(127);
  }
  return pid;
}

std::string describe(int status) {
  if (WIFEXITED(status)) return "exited with status " + std::to_string(WEXITSTATUS(status));
  if (WIFSIGNALED(status)) {
    const char* name = sigabbrev_np(WTERMSIG(status));
    return "was killed by " + (name ? "SIG" + std::string(name) : "signal " + std::to_string(WTERMSIG(status)));
  }
  return "ended with wait status " + std::to_string(status);
}

bool failed(const RankProcess& rank) { return !(WIFEXITED(rank.status) && WEXITSTATUS(rank.status) == 0); }

// Reaps ranks until all have ended; after the first failure the others get `grace_seconds`,
// then SIGTERM (and SIGCONT, for a stopped one), then 10 s later SIGKILL.
void wait_for_ranks(std::vector<RankProcess>& ranks, std::vector<pid_t>& pids, int grace_seconds) {
  using Clock = std::chrono::steady_clock;
  int finished = 0, signals_sent = 0;
  Clock::time_point deadline = Clock::time_point::max();
  while (finished < static_cast<int>(ranks.size())) {
    int status = 0;
    const pid_t pid = ::waitpid(-1, &status, WNOHANG);
    if (pid < 0 && errno != EINTR) fail_runtime(std::string("waiting for local ranks: ") + strerror(errno));
    for (std::size_t r = 0; r < ranks.size() && pid > 0; ++r) {
      if (ranks[r].pid != pid || !ranks[r].running) continue;
      ranks[r].running = false;
      ranks[r].status = status;
      ranks[r].finish_order = finished++;
      pids[r] = -1;
      if (failed(ranks[r]) && deadline == Clock::time_point::max()) {
        deadline = Clock::now() + std::chrono::seconds(grace_seconds);
      }
    }
    if (pid > 0) continue;
    if (Clock::now() > deadline && signals_sent < 2) {
      forward_signal(signals_sent == 0 ? SIGTERM : SIGKILL);
      forward_signal(SIGCONT);  // a stopped rank must wake to act on SIGTERM
      ++signals_sent;
      deadline = Clock::now() + std::chrono::seconds(10);
    }
    std::this_thread::sleep_for(std::chrono::milliseconds(20));
  }
}

[[noreturn]] void fail_with_summary(const std::vector<RankProcess>& ranks, int world) {
  const RankProcess* first = nullptr;
  int first_rank = 0;
  bool all_usage = true;
  for (std::size_t r = 0; r < ranks.size(); ++r) {
    if (!failed(ranks[r])) continue;
    all_usage = all_usage && WIFEXITED(ranks[r].status) && WEXITSTATUS(ranks[r].status) == 2;
    if (!first || ranks[r].finish_order < first->finish_order) {
      first = &ranks[r];
      first_rank = static_cast<int>(r);
    }
  }
  std::string message = "local rank " + std::to_string(first_rank) + " of " + std::to_string(world) +
                        " failed first: it " + describe(first->status);
  for (std::size_t r = 0; r < ranks.size(); ++r) {
    if (&ranks[r] != first) message += "; rank " + std::to_string(r) + " " + describe(ranks[r].status);
  }
  if (all_usage) fail_usage(message + " (see the ranks' messages above)");
  fail_runtime(message + ". See the ranks' messages above; a training run continues from its last checkpoint "
                         "with --resume, with the same or another --world");
}

}  // namespace

void run_local_ranks(const LocalLaunch& launch) {
  if (launch.world < 1) fail_usage("--world must be at least 1, got " + std::to_string(launch.world));
  const int port = launch.port > 0 ? launch.port : free_loopback_port();
  std::vector<RankProcess> ranks(static_cast<std::size_t>(launch.world));
  std::vector<pid_t> pids(ranks.size(), -1);

  sigset_t forwarded, previous_mask;
  sigemptyset(&forwarded);
  for (int s : kForwarded) sigaddset(&forwarded, s);
  ::sigprocmask(SIG_BLOCK, &forwarded, &previous_mask);
  struct sigaction action {}, previous[3];
  action.sa_handler = forward_signal;
  sigemptyset(&action.sa_mask);
  for (int i = 0; i < 3; ++i) ::sigaction(kForwarded[i], &action, &previous[i]);
  forward_to = &pids;
  auto restore = [&] {
    forward_to = nullptr;
    for (int i = 0; i < 3; ++i) ::sigaction(kForwarded[i], &previous[i], nullptr);
    ::sigprocmask(SIG_SETMASK, &previous_mask, nullptr);
  };

  try {
    for (int r = 0; r < launch.world; ++r) {
      pids[static_cast<std::size_t>(r)] = start_rank(launch, r, port, previous_mask);
      ranks[static_cast<std::size_t>(r)].pid = pids[static_cast<std::size_t>(r)];
      ranks[static_cast<std::size_t>(r)].running = true;
    }
    ::sigprocmask(SIG_SETMASK, &previous_mask, nullptr);
    wait_for_ranks(ranks, pids, launch.grace_seconds);
  } catch (...) {
    forward_signal(SIGTERM);
    restore();
    throw;
  }
  restore();
  if (std::any_of(ranks.begin(), ranks.end(), failed)) fail_with_summary(ranks, launch.world);
}

int threads_per_rank(int total, int world) { return std::max(1, total / std::max(1, world)); }

}  // namespace tinct
