// tinct pair CONFIG: unlabelled band stacks + colour -> a pair store.
#include "cli/commands.hpp"
#include "pairing/pair_config.hpp"
#include "pairing/pair_job.hpp"
#include "util/config_node.hpp"
#include "util/sha256.hpp"
#include "util/stage_times.hpp"

namespace tinct {

struct PairOptions {
  std::string config;
  std::string out;
  std::string shard;
  bool force = false;
};

static void run_pair(const PairOptions& options) {
  const ConfigNode root = ConfigNode::load(options.config);
  root.choice("config", {"pair"});
  const PairConfig config = read_pair_config(root);
  root.finish();

  PairJobOptions job;
  job.output = options.out.empty() ? config.output : std::filesystem::path(options.out);
  job.replace = options.force;
  job.config_hash = sha256_hex(resolved_text(root));
  if (!options.shard.empty()) {
    parse_shard(options.shard, job.shard_index, job.shard_count);
    if (options.out.empty()) {
      job.output += "." + std::to_string(job.shard_index) + "-of-" + std::to_string(job.shard_count);
    }
  }
  stage_done("startup");
  run_pair_job(config, job);
}

CommandRun setup_pair(CLI::App& command, const GlobalOptions&) {
  auto options = std::make_shared<PairOptions>();
  command.add_option("config", options->config, "Pair config (YAML, config: pair)")->required();
  command.add_option("--out", options->out, "Store folder to write (default: the config's output)");
  command.add_option("--shard", options->shard,
                     "Pair only scenes i, i+n, ... of the config (i/n, 0-based), for array jobs; "
                     "the store gets the suffix .i-of-n unless --out is given");
  command.add_flag("--force", options->force, "Replace an existing store (the old one stays whole until the new one is complete)");
  return [options] { run_pair(*options); };
}

}  // namespace tinct
