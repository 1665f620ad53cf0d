// tinct's entry point: global options, the table of subcommands, and the one
// place where errors become messages and exit codes (0 ok, 1 runtime, 2 usage).
#include <sys/resource.h>
#include <unistd.h>

#include <algorithm>
#include <cctype>
#include <cstdint>
#include <cstdlib>
#include <exception>
#include <filesystem>
#include <iostream>
#include <new>
#include <string>
#include <vector>

#include "cli/commands.hpp"
#include "raster/gdal_session.hpp"
#include "runs/torch_runtime.hpp"
#include "util/error.hpp"
#include "util/log.hpp"
#include "util/nearest_name.hpp"
#include "util/version_info.hpp"

namespace {

// OpenBLAS starts its thread pool while the libraries load, before main, and each pool
// thread reserves a buffer of about 128 MiB; under an address-space limit (ulimit -v) a
// failed reservation is retried for ever. A .preinit_array function runs before any
// library's initialiser, so it can ask OpenBLAS for no pool when the limit is tight.
// LibTorch's own initialisers allocate while the libraries load, before main's try block;
// an allocation failure there would end in a bare "terminate called". Installed before
// any library starts, this says "out of memory" and exits 1 instead.
[[noreturn]] void on_terminate() {
  if (const std::exception_ptr current = std::current_exception()) {
    try {
      std::rethrow_exception(current);
    } catch (const std::bad_alloc&) {
      static const char kText[] =
          "error: out of memory while loading tinct's libraries; run where more memory is free "
          "(ulimit -v also limits it)\n";
      [[maybe_unused]] const auto written = ::write(2, kText, sizeof(kText) - 1);
      std::_Exit(1);
    } catch (const std::exception& error) {
      const std::string text = std::string("error: unexpected failure: ") + error.what() + "\n";
      [[maybe_unused]] const auto written = ::write(2, text.data(), text.size());
    } catch (...) {
    }
  }
  std::abort();
}

void no_blas_pool_under_tight_limit(int, char**, char**) {
  std::set_terminate(on_terminate);
  rlimit limit{};
  if (::getrlimit(RLIMIT_AS, &limit) != 0 || limit.rlim_cur == RLIM_INFINITY) return;
  if (limit.rlim_cur > (std::uint64_t{8} << 30)) return;
  ::setenv("OPENBLAS_NUM_THREADS", "1", /*overwrite=*/0);
}
__attribute__((section(".preinit_array"), used)) void (*const kBeforeLibraries)(int, char**, char**) =
    &no_blas_pool_under_tight_limit;

const tinct::CommandEntry kCommands[] = {
    {"survey", "Describe rasters: grid, CRS and exact per-band statistics", tinct::setup_survey},
    {"pair", "Pair unlabelled band stacks with co-registered colour into a store of chips",
     tinct::setup_pair},
    {"pretrain", "Pretrain a band-to-colour encoder-decoder on pair stores (self-supervised)",
     tinct::setup_pretrain},
    {"label", "Cut chips around field labels (points, polygons or a label raster) into a label store",
     tinct::setup_label},
    {"finetune", "Fine-tune a classifier on a label store, from a pretrain run or from scratch",
     tinct::setup_finetune},
    {"assess", "Apply a finetune run to a label store and write its metrics", tinct::setup_assess},
    {"study", "Compare arms (pretrained, scratch, pixel baselines) over label budgets, seeds and folds, with a report",
     tinct::setup_study},
    {"map", "Map a finetune run over whole scenes: class probabilities, uncertainty and area of applicability",
     tinct::setup_map},
    {"export", "Write a pretrained encoder as safetensors for other tools", tinct::setup_export},
    {"check", "Validate a config without running it and print it with every default filled in",
     tinct::setup_check},
};

std::string version_text() {
  return "tinct " + tinct::tinct_version() + "\nLibTorch " + tinct::libtorch_version() + "\nGDAL " +
         tinct::gdal_version() + "\nOpenCV " + tinct::opencv_version();
}

// The first word that is neither a global option nor its value: the command the user
// meant. CLI11 alone would only say "A subcommand is required" for a misspelt one.
std::string command_word(int argc, char** argv) {
  for (int i = 1; i < argc; ++i) {
    const std::string word = argv[i];
    if (word == "--threads") {
      ++i;
      continue;
    }
    if (word.rfind("-", 0) != 0) return word;
  }
  return "";
}

// "" when `word` is a command (or absent); else what to tell the user.
std::string unknown_command_message(const std::string& word) {
  if (word.empty()) return "";
  std::vector<std::string> names;
  for (const auto& entry : kCommands) {
    if (word == entry.name) return "";
    names.push_back(entry.name);
  }
  std::string lower = word;
  for (char& c : lower) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  const auto same_but_case = std::find(names.begin(), names.end(), lower);
  const std::string near = same_but_case != names.end() ? lower : tinct::nearest_name(word, names);
  std::string list;
  for (const auto& name : names) list += (list.empty() ? "" : ", ") + name;
  return "unknown command \"" + word + "\"" + (near.empty() ? "" : "; did you mean \"" + near + "\"?") +
         " The commands are " + list + " (tinct --help describes them)";
}

const char* const kOutOfMemory =
    "out of memory: the process could not allocate what it needed; lower train.batch, the chip size or "
    "--threads, or run where more memory is free (ulimit -v also limits it)";

// LibTorch's allocator reports a failed allocation as a c10::Error with this text.
bool is_allocation_failure(const std::string& message) {
  return message.find("can't allocate memory") != std::string::npos ||
         message.find("not enough memory") != std::string::npos;
}

int parse_error_exit(const CLI::App& app, const CLI::ParseError& error) {
  const int code = app.exit(error);  // prints help, version or the usage error
  return code == 0 ? 0 : 2;
}

}  // namespace

int main(int argc, char** argv) {
  // Named explicitly so usage lines say "tinct", not the path the binary was run by.
  CLI::App app{"tinct: self-supervised band-to-colour pretraining and habitat mapping from "
               "multispectral imagery, on the CPU",
               "tinct"};
  app.set_version_flag("--version", version_text());
  app.require_subcommand(1);
  tinct::GlobalOptions global;
  app.add_option("--threads", global.threads, "Compute threads, up to 1024 as train.threads (default: all cores)")
      ->check(CLI::Range(0, 1024));
  app.add_flag("--quiet,-q", global.quiet, "Only warnings and errors on stderr");

  std::vector<std::pair<CLI::App*, tinct::CommandRun>> commands;
  for (const auto& entry : kCommands) {
    CLI::App* command = app.add_subcommand(entry.name, entry.summary);
    command->fallthrough();  // global options (--threads, --quiet) also after the command
    commands.emplace_back(command, entry.setup(*command, global));
  }

  const std::string unknown = unknown_command_message(command_word(argc, argv));
  if (!unknown.empty()) {
    tinct::log::error(unknown);
    return 2;
  }
  try {
    app.parse(argc, argv);
  } catch (const CLI::ParseError& error) {
    return parse_error_exit(app, error);
  }

  try {
    tinct::log::set_quiet(global.quiet);
    tinct::configure_threads(global.threads);
    for (auto& [command, run] : commands) {
      if (command->parsed()) run();
    }
    return 0;
  } catch (const tinct::Error& error) {
    tinct::log::error(error.what());
    return error.exit_code();
  } catch (const std::filesystem::filesystem_error& error) {
    // Raised by a file system call that no stage wrapped: still say which path and why.
    const std::string second = error.path2().empty() ? "" : " (and " + error.path2().string() + ")";
    tinct::log::error("cannot access " + error.path1().string() + second + ": " + error.code().message() +
                      "; check the path, its permissions and the free space");
    return 1;
  } catch (const std::bad_alloc&) {
    tinct::log::error(kOutOfMemory);
    return 1;
  } catch (const std::exception& error) {
    if (is_allocation_failure(error.what())) {
      tinct::log::error(kOutOfMemory);
      return 1;
    }
    tinct::log::error(std::string("unexpected failure: ") + error.what());
    return 1;
  }
}
