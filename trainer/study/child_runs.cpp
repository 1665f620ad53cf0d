#include "study/child_runs.hpp"

#include <fcntl.h>
#include <signal.h>
#include <sys/prctl.h>
#include <sys/wait.h>
#include <unistd.h>

#include <cerrno>
#include <chrono>
#include <cstring>
#include <fstream>
#include <map>
#include <thread>

#include "distributed/rendezvous.hpp"
#include "util/error.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

// This process's environment less the variables that would make a child join a
// data-parallel job, as execve wants it.
std::vector<std::string> child_environment() {
  static const char* const kPlacement[] = {"RANK", "WORLD_SIZE", "LOCAL_RANK", "MASTER_ADDR", "MASTER_PORT",
                                           "SLURM_PROCID", "SLURM_NTASKS", "SLURM_LOCALID"};
  Environment environment = process_environment();
  for (const char* name : kPlacement) environment.erase(name);
  std::vector<std::string> entries;
  for (const auto& [name, value] : environment) entries.push_back(name + "=" + value);
  return entries;
}

std::vector<char*> pointers_to(std::vector<std::string>& words) {
  std::vector<char*> pointers;
  for (auto& word : words) pointers.push_back(word.data());
  pointers.push_back(nullptr);
  return pointers;
}

// argv and envp are built before fork: the child calls only async-signal-safe functions.
[[noreturn]] void exec_child(const fs::path& program, char* const* argv, char* const* envp, const fs::path& log_file,
                             const std::string& failure, pid_t parent) {
  prctl(PR_SET_PDEATHSIG, SIGTERM);
  if (getppid() != parent) _exit(127);  // the study died before prctl took effect
  const int log = open(log_file.c_str(), O_WRONLY | O_CREAT | O_TRUNC | O_CLOEXEC, 0644);
  if (log >= 0) {
    dup2(log, STDOUT_FILENO);
    dup2(log, STDERR_FILENO);
  }
  execve(program.c_str(), argv, envp);
  (void)!write(STDERR_FILENO, failure.data(), failure.size());
  _exit(127);
}

pid_t start(const fs::path& program, const ChildJob& job) {
  fs::create_directories(job.log.parent_path());
  std::vector<std::string> words{"tinct"};
  words.insert(words.end(), job.arguments.begin(), job.arguments.end());
  std::vector<std::string> environment = child_environment();
  const std::vector<char*> argv = pointers_to(words), envp = pointers_to(environment);
  const std::string failure = "error: cannot run " + program.string() + " (missing, or not executable)\n";
  const pid_t parent = getpid();
  const pid_t pid = fork();
  if (pid < 0) fail_runtime(std::string("cannot start a child process: ") + std::strerror(errno));
  if (pid == 0) exec_child(program, argv.data(), envp.data(), job.log, failure, parent);
  return pid;
}

ChildExit exit_of(int status) {
  ChildExit exit;
  if (WIFEXITED(status)) exit.code = WEXITSTATUS(status);
  if (WIFSIGNALED(status)) exit.signal = WTERMSIG(status);
  return exit;
}

void stop_all(const std::map<pid_t, std::size_t>& running) {
  for (const auto& [pid, index] : running) kill(pid, SIGTERM);
  for (const auto& [pid, index] : running) waitpid(pid, nullptr, 0);
}

}  // namespace

std::string ChildExit::describe() const {
  return signal ? "killed by signal " + std::to_string(signal) : "exit " + std::to_string(code);
}

fs::path self_executable() { return fs::read_symlink("/proc/self/exe"); }

void run_children(const fs::path& program, const NextChildJob& next, int parallel, const ChildFinished& finished,
                  const std::function<void()>& idle) {
  std::map<pid_t, std::size_t> running;
  std::size_t started = 0;
  bool more = true;
  try {
    for (;;) {
      while (more && static_cast<int>(running.size()) < parallel) {
        const std::optional<ChildJob> job = next();
        more = job.has_value();
        if (more) running[start(program, *job)] = started++;
      }
      if (running.empty()) return;
      int status = 0;
      const pid_t pid = waitpid(-1, &status, idle ? WNOHANG : 0);
      if (pid == 0) {
        idle();
        std::this_thread::sleep_for(std::chrono::milliseconds(100));
        continue;
      }
      if (pid < 0) {
        if (errno == EINTR) continue;
        fail_runtime(std::string("waiting for a child process failed: ") + std::strerror(errno));
      }
      const auto found = running.find(pid);
      if (found == running.end()) continue;
      const std::size_t index = found->second;
      running.erase(found);
      finished(index, exit_of(status));
    }
  } catch (...) {
    stop_all(running);
    throw;
  }
}

void run_children(const fs::path& program, const std::vector<ChildJob>& jobs, int parallel,
                  const ChildFinished& finished) {
  std::size_t next = 0;
  run_children(
      program, [&]() -> std::optional<ChildJob> { return next < jobs.size() ? std::optional(jobs[next++]) : std::nullopt; },
      parallel, finished);
}

std::string last_error_line(const fs::path& log) {
  std::ifstream in(log);
  std::string line, last, error;
  while (std::getline(in, line)) {
    if (line.empty()) continue;
    last = line;
    if (line.find("error") != std::string::npos) error = line;
  }
  return error.empty() ? last : error;
}

}  // namespace tinct
