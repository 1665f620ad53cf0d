// tinct assess RUN --on STORE: a finetune run's model applied to any label store.
#include "chips/store_list.hpp"
#include "cli/commands.hpp"
#include "inference/assess_job.hpp"

namespace tinct {

struct AssessOptions {
  std::string run;
  std::string store;
  std::string out;
  bool all = false;
};

CommandRun setup_assess(CLI::App& command, const GlobalOptions&) {
  auto options = std::make_shared<AssessOptions>();
  command.add_option("run", options->run, "A finetune run folder (it holds model.pt)")->required();
  command.add_option("--on", options->store, "Label store to assess on")->required();
  command.add_option("--out", options->out, "Folder for the metric files (default: RUN/assess-STORE)");
  command.add_flag("--all", options->all,
                   "Score every chip, also those the run trained or validated on (optimistic; said loudly)");
  return [options] {
    require_store_kind(options->store, StoreKind::labels, "--on");
    run_assess(options->run, options->store, options->out, options->all);
  };
}

}  // namespace tinct
