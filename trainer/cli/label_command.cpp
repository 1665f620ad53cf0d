// tinct label CONFIG: field labels (points, polygons or a label raster) + scenes
// -> a label store of chips, and a report of the labels dropped and why.
#include "cli/commands.hpp"
#include "labels/label_config.hpp"
#include "labels/label_job.hpp"
#include "util/config_node.hpp"
#include "util/sha256.hpp"

namespace tinct {

struct LabelOptions {
  std::string config;
  std::string out;
  bool force = false;
};

static void run_label(const LabelOptions& options) {
  const ConfigNode root = ConfigNode::load(options.config);
  root.choice("config", {"label"});
  const LabelConfig config = read_label_config(root);
  root.finish();

  LabelJobOptions job;
  job.output = options.out.empty() ? config.output : std::filesystem::path(options.out);
  job.replace = options.force;
  job.config_hash = sha256_hex(resolved_text(root));
  run_label_job(config, job);
}

CommandRun setup_label(CLI::App& command, const GlobalOptions&) {
  auto options = std::make_shared<LabelOptions>();
  command.add_option("config", options->config, "Label config (YAML, config: label)")->required();
  command.add_option("--out", options->out, "Store folder to write (default: the config's output)");
  command.add_flag("--force", options->force, "Replace an existing store (the old one stays whole until the new one is complete)");
  return [options] { run_label(*options); };
}

}  // namespace tinct
