// The layout of a safetensors file read from its bytes, without LibTorch: the header's
// tensors (name, dtype name, shape, data offsets) and metadata, every offset and size
// checked against the data section, and the data's SHA-256 when the header records one.
// safetensors.cpp turns the entries into tensors; plain C++ so it can be fuzzed alone.
#pragma once

#include <cstdint>
#include <filesystem>
#include <map>
#include <string>
#include <vector>

namespace tinct {

// The metadata key whose value, when present, is the SHA-256 (hex) of the data section
// (every tensor's bytes in header order): the reader checks it.
inline constexpr const char* kDataChecksumKey = "data_sha256";

struct SafetensorsEntry {
  std::string name;
  std::string dtype;  // F64, F32, F16, BF16, I64, I32, I16, I8, U8 or BOOL
  std::vector<std::int64_t> shape;
  std::uint64_t begin = 0, end = 0;  // byte offsets into the data section
};

struct SafetensorsLayout {
  std::vector<SafetensorsEntry> entries;  // in header order
  std::map<std::string, std::string> metadata;
  std::uint64_t data_offset = 0;  // where the data section starts in the file
};

// Bytes per element of a dtype name this reader accepts; 0 for any other name.
int safetensors_element_size(const std::string& dtype);

// Fails (runtime) naming `file` on any violation of the layout: short file, bad JSON,
// unknown dtype, offsets outside the data, sizes that disagree with shapes, holes, or
// data that differs from its data_sha256.
SafetensorsLayout read_safetensors_layout(const std::string& bytes, const std::filesystem::path& file);

}  // namespace tinct
