// Tensors in the open safetensors layout, for weights other tools can read without
// LibTorch: u64 little-endian header length N, N bytes of JSON header (space-padded so
// the data starts at a multiple of 8), then each tensor's raw little-endian C-order bytes
// in header order. The reader parses only this format's JSON subset and loads the whole
// file (no memory mapping): enough for checkpoints of tinct's models and for tests.
#pragma once

#include <torch/torch.h>

#include <filesystem>
#include <map>
#include <string>
#include <utility>
#include <vector>

#include "runs/safetensors_layout.hpp"

namespace tinct {

using NamedTensors = std::vector<std::pair<std::string, torch::Tensor>>;

// dtypes: F64, F32, F16, BF16, I64, I32, I16, I8, U8, BOOL. Tensors are detached and made
// contiguous on the CPU; names must be unique, non-empty and not "__metadata__". The file
// is replaced atomically (temporary sibling, then rename).
void write_safetensors(const std::filesystem::path& path, const NamedTensors& tensors,
                       const std::map<std::string, std::string>& metadata = {});

// kDataChecksumKey ("data_sha256" in the metadata): the SHA-256 (hex) of the data section
// (every tensor's bytes in header order), which read_safetensors checks.
std::string safetensors_data_sha256(const NamedTensors& tensors);

// Tensors in header order; `metadata`, when given, receives "__metadata__" (or is cleared).
// Fails (runtime) with the path on any violation of the layout: short file, bad JSON,
// unknown dtype, offsets outside the data, sizes that disagree with shapes, holes, or
// data that differs from its data_sha256.
NamedTensors read_safetensors(const std::filesystem::path& path,
                              std::map<std::string, std::string>* metadata = nullptr);

}  // namespace tinct
