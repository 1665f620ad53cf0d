// tinct, the command users type. survey, pair and label run in this process, which never
// loads LibTorch: its libraries and their initialisers cost about 0.6 CPU seconds at
// every start, a sixth of pairing a 4096 x 4096 scene. Everything else (the other
// commands, --help, --version, a misspelt command) is handed to tinct-torch beside this
// binary, which has every command: exec keeps the process id, the arguments, signals
// and the exit code.
#include <unistd.h>

#include <cerrno>
#include <cstdlib>
#include <cstring>
#include <filesystem>
#include <string>

#include "cli/commands.hpp"
#include "cli/process_guard.hpp"
#include "util/log.hpp"

namespace {

bool runs_here(int argc, char** argv) {
  for (int i = 1; i < argc; ++i) {
    if (std::string(argv[i]) == "--version") return false;
  }
  const std::string word = tinct::command_word(argc, argv);
  for (const auto& entry : tinct::data_commands()) {
    if (word == entry.name) return true;
  }
  return false;
}

[[noreturn]] void hand_over(char** argv) {
  std::error_code ignored;
  const std::filesystem::path self = std::filesystem::read_symlink("/proc/self/exe", ignored);
  const std::filesystem::path whole = self.parent_path() / "tinct-torch";
  ::execv(whole.c_str(), argv);
  tinct::log::error("cannot start " + whole.string() + ": " + std::strerror(errno) +
                    "; it runs every command but survey, pair and label and belongs beside tinct: "
                    "build or install both");
  std::_Exit(1);
}

}  // namespace

int main(int argc, char** argv) {
  if (!runs_here(argc, argv)) hand_over(argv);
  CLI::App app{tinct::kToolDescription, "tinct"};
  tinct::GlobalOptions global;  // --threads: LibTorch's threads, none here
  const tinct::CommandTable commands = tinct::add_commands(app, tinct::data_commands(), global);
  if (const auto code = tinct::parse_or_exit(app, argc, argv)) return *code;
  return tinct::run_guarded([&] {
    tinct::log::set_quiet(global.quiet);
    tinct::run_parsed(commands);
  });
}
