// What both of tinct's executables (cli/main.cpp, cli/front_main.cpp) do around a
// command: "out of memory" instead of a bare terminate while libraries load, no OpenBLAS
// thread pool under a tight address-space limit (both run before main, from this
// file's .preinit_array entry: link this file into each executable, not a library),
// the command word of the command line, and the one place where errors become messages
// and exit codes (0 ok, 1 runtime, 2 usage).
#pragma once

#include <functional>
#include <string>

namespace tinct {

// The first word that is neither a global option nor its value: the command the user
// meant ("" when there is none).
std::string command_word(int argc, char** argv);

// Runs `command`; returns its exit code, with any error said on stderr (and in a run's log).
int run_guarded(const std::function<void()>& command);

}  // namespace tinct
