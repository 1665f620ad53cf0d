#include "study/child_runs.hpp"

#include <fcntl.h>
#include <signal.h>
#include <sys/prctl.h>
#include <sys/wait.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>
#include <fstream>
#include <map>

#include "util/error.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

[[noreturn]] void exec_child(const fs::path& program, const ChildJob& job, pid_t parent) {
  prctl(PR_SET_PDEATHSIG, SIGTERM);
  if (getppid() != parent) _exit(127);  // the study died before prctl took effect
  const int log = open(job.log.c_str(), O_WRONLY | O_CREAT | O_TRUNC | O_CLOEXEC, 0644);
  if (log >= 0) {
    dup2(log, STDOUT_FILENO);
    dup2(log, STDERR_FILENO);
  }
  std::vector<std::string> words{"tinct"};
  words.insert(words.end(), job.arguments.begin(), job.arguments.end());
  std::vector<char*> argv;
  for (auto& word : words) argv.push_back(word.data());
  argv.push_back(nullptr);
  execv(program.c_str(), argv.data());
  const std::string message = "error: cannot run " + program.string() + ": " + std::strerror(errno) + "\n";
  (void)!write(STDERR_FILENO, message.data(), message.size());
  _exit(127);
}

pid_t start(const fs::path& program, const ChildJob& job) {
  fs::create_directories(job.log.parent_path());
  const pid_t parent = getpid();
  const pid_t pid = fork();
  if (pid < 0) fail_runtime(std::string("cannot start a child process: ") + std::strerror(errno));
  if (pid == 0) exec_child(program, job, parent);
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

void run_children(const fs::path& program, const std::vector<ChildJob>& jobs, int parallel,
                  const std::function<void(std::size_t, const ChildExit&)>& finished) {
  std::map<pid_t, std::size_t> running;
  std::size_t next = 0;
  try {
    while (next < jobs.size() || !running.empty()) {
      while (next < jobs.size() && static_cast<int>(running.size()) < parallel) {
        running[start(program, jobs[next])] = next;
        ++next;
      }
      int status = 0;
      const pid_t pid = waitpid(-1, &status, 0);
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
