// Fuzz target: a safetensors file's header and layout (runs/safetensors_layout), all that
// read_safetensors checks before it copies bytes into tensors.
#include <cstddef>
#include <cstdint>

#include "fuzz_input.hpp"
#include "runs/safetensors_layout.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string bytes = tinct::fuzz::as_text(data, size);
  tinct::fuzz::expect_clean_refusal([&] {
    const tinct::SafetensorsLayout layout = tinct::read_safetensors_layout(bytes, "model.safetensors");
    for (const auto& entry : layout.entries) {
      // What read_safetensors relies on: each tensor's bytes lie inside the data section.
      if (entry.end > bytes.size() - layout.data_offset) __builtin_trap();
    }
  });
  return 0;
}
