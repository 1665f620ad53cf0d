// `tinct export`: a run's encoder as safetensors (JSON header with dtype, shape and
// offsets, then raw little-endian data), with the band list, band statistics,
// chip size and architecture in its metadata, so other stacks can use the features.
#pragma once

#include <filesystem>

namespace tinct {

// `run` is a pretrain run folder (or its encoder.pt). Returns the tensor count.
int export_encoder(const std::filesystem::path& run, const std::filesystem::path& out);

}  // namespace tinct
