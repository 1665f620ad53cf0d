// tinct export RUN --out FILE.safetensors: a pretrained encoder for other stacks.
#include "cli/commands.hpp"
#include "runs/encoder_export.hpp"
#include "util/log.hpp"

namespace tinct {

struct ExportOptions {
  std::string run;
  std::string out;
};

CommandRun setup_export(CLI::App& command, const GlobalOptions&) {
  auto options = std::make_shared<ExportOptions>();
  command.add_option("run", options->run, "A pretrain run folder (or its encoder.pt)")->required();
  command.add_option("--out", options->out, "Output .safetensors file")->required();
  return [options] {
    const int tensors = export_encoder(options->run, options->out);
    log::info("export: wrote " + std::to_string(tensors) + " tensors to " + options->out);
  };
}

}  // namespace tinct
