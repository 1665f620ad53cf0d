// The arithmetic of pretraining's forward pass: fp32, or bfloat16 autocast (convolutions
// and matrix products in bf16, their inputs cast once, the rest left as LibTorch's CPU
// autocast lists say) on processors that compute bf16 natively (AVX512-BF16 or AMX), where
// oneDNN's bf16 kernels run the step faster. `auto` takes bf16 there and fp32 elsewhere:
// emulated bf16 is slower than fp32. No LibTorch in this header: configs read it.
#pragma once

#include <string>
#include <vector>

namespace tinct {

struct PrecisionChoice {
  std::string requested = "auto";  // fp32 | bf16 | auto (train.precision)
  std::string used = "fp32";       // fp32 | bf16
  std::string why;                 // "auto: the processor has amx_bf16", for run.yaml and the log
  bool bf16() const { return used == "bf16"; }
};

const std::vector<std::string>& precision_names();  // fp32, bf16, auto

// The native bf16 flags of this processor (avx512_bf16, amx_bf16) from /proc/cpuinfo;
// empty where it has none or the file cannot be read.
std::vector<std::string> native_bf16_flags();

// Resolves a request: fp32 and bf16 as asked (bf16 without native support is allowed,
// only slow, and `why` says so); auto as described above.
PrecisionChoice choose_precision(const std::string& requested);

// bf16 autocast of the CPU for the scope's life when `choice` says bf16, else nothing.
// Its cache of bf16 weight copies is cleared at the end: the step changes the weights.
class ForwardPrecision {
 public:
  explicit ForwardPrecision(const PrecisionChoice& choice);
  ~ForwardPrecision();
  ForwardPrecision(const ForwardPrecision&) = delete;
  ForwardPrecision& operator=(const ForwardPrecision&) = delete;

 private:
  bool on_ = false;
  bool was_enabled_ = false;
};

}  // namespace tinct
