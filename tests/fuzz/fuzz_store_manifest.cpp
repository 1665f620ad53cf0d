// Fuzz target: a store's manifest.yaml through read_manifest, then the layout checks and
// sizes a reader derives from it before mapping the .bin files.
#include <cstddef>
#include <cstdint>

#include "chips/store_manifest.hpp"
#include "fuzz_input.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const auto file = tinct::fuzz::input_file("manifest.yaml", data, size);
  tinct::fuzz::expect_clean_refusal([&] {
    const tinct::StoreManifest manifest = tinct::read_manifest(file);
    const tinct::StoreLayout layout = tinct::layout_of(manifest);
    tinct::check_layout(layout, file.string());
    tinct::chip_band_bytes(layout);
    tinct::chip_colour_bytes(layout);
    tinct::chip_valid_bytes(layout);
    tinct::manifest_yaml(manifest);
  });
  return 0;
}
