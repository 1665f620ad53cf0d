#include "training/precision.hpp"

#include <ATen/Context.h>
#include <ATen/autocast_mode.h>

#include <fstream>
#include <sstream>

namespace tinct {

const std::vector<std::string>& precision_names() {
  static const std::vector<std::string> names{"fp32", "bf16", "auto"};
  return names;
}

std::vector<std::string> native_bf16_flags() {
  std::ifstream cpuinfo("/proc/cpuinfo");
  std::string line;
  while (std::getline(cpuinfo, line)) {
    if (line.rfind("flags", 0) != 0) continue;
    std::istringstream words(line.substr(line.find(':') + 1));
    std::vector<std::string> found;
    for (std::string flag; words >> flag;) {
      if (flag == "avx512_bf16" || flag == "amx_bf16") found.push_back(flag);
    }
    return found;  // the first processor's flags speak for all
  }
  return {};
}

PrecisionChoice choose_precision(const std::string& requested) {
  PrecisionChoice choice;
  choice.requested = requested;
  const std::vector<std::string> flags = native_bf16_flags();
  std::string has;
  for (const auto& flag : flags) has += (has.empty() ? "" : " and ") + flag;
  // Without oneDNN, LibTorch's bf16 convolutions are slow reference loops.
  const bool fast = !flags.empty() && at::hasMKLDNN();
  if (requested == "fp32") {
    choice.why = "as requested";
  } else if (requested == "bf16") {
    choice.used = "bf16";
    choice.why = fast ? "as requested; the processor has " + has
                      : "as requested, though the processor has no native bf16 (emulated)";
  } else if (fast) {
    choice.used = "bf16";
    choice.why = "auto: the processor has " + has;
  } else {
    choice.why = flags.empty() ? "auto: the processor has no native bf16 (avx512_bf16 or amx_bf16)"
                               : "auto: this LibTorch has no oneDNN for bf16 convolutions";
  }
  return choice;
}

ForwardPrecision::ForwardPrecision(const PrecisionChoice& choice) : on_(choice.bf16()) {
  if (!on_) return;
  was_enabled_ = at::autocast::is_cpu_enabled();
  at::autocast::set_autocast_cpu_dtype(at::kBFloat16);
  at::autocast::set_cpu_enabled(true);
  at::autocast::increment_nesting();
}

ForwardPrecision::~ForwardPrecision() {
  if (!on_) return;
  if (at::autocast::decrement_nesting() == 0) at::autocast::clear_cache();
  at::autocast::set_cpu_enabled(was_enabled_);
}

}  // namespace tinct
