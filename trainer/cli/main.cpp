// tinct-torch, the whole tool: global options and the table of every subcommand. The
// `tinct` users type (cli/front_main.cpp) runs the data commands itself and hands
// everything else here.
#include <algorithm>
#include <cctype>
#include <string>
#include <vector>

#include "cli/commands.hpp"
#include "cli/process_guard.hpp"
#include "raster/gdal_session.hpp"
#include "runs/torch_runtime.hpp"
#include "util/log.hpp"
#include "util/nearest_name.hpp"
#include "util/version_info.hpp"

namespace {

// Every command, in the order of the work (the data commands' rows are shared with tinct).
std::vector<tinct::CommandEntry> all_commands() {
  const auto data = [](const std::string& name) {
    for (const auto& entry : tinct::data_commands()) {
      if (name == entry.name) return entry;
    }
    return tinct::CommandEntry{};
  };
  return {
      data("survey"),
      data("pair"),
      {"pretrain", "Pretrain a band-to-colour encoder-decoder on pair stores (self-supervised)",
       tinct::setup_pretrain},
      data("label"),
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
}

std::string version_text() {
  return "tinct " + tinct::tinct_version() + "\nLibTorch " + tinct::libtorch_version() + "\nGDAL " +
         tinct::gdal_version() + "\nOpenCV " + tinct::opencv_version();
}

// "" when `word` is a command (or absent); else what to tell the user.
std::string unknown_command_message(const std::string& word) {
  if (word.empty()) return "";
  std::vector<std::string> names;
  for (const auto& entry : all_commands()) {
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

}  // namespace

int main(int argc, char** argv) {
  // Named explicitly so usage lines say "tinct", not the path the binary was run by.
  CLI::App app{tinct::kToolDescription, "tinct"};
  app.set_version_flag("--version", version_text());
  tinct::GlobalOptions global;
  const tinct::CommandTable commands = tinct::add_commands(app, all_commands(), global);

  const std::string unknown = unknown_command_message(tinct::command_word(argc, argv));
  if (!unknown.empty()) {
    tinct::log::error(unknown);
    return 2;
  }
  if (const auto code = tinct::parse_or_exit(app, argc, argv)) return *code;

  return tinct::run_guarded([&] {
    tinct::log::set_quiet(global.quiet);
    tinct::configure_threads(global.threads);
    tinct::run_parsed(commands);
  });
}
