// Writing and reading safetensors files (safetensors.hpp): the header written by
// nlohmann::json; reading checks the layout first (safetensors_layout.cpp), then copies
// each tensor's bytes.
#include "runs/safetensors.hpp"

#include <cerrno>
#include <cstdint>
#include <cstring>
#include <fstream>
#include <set>

#include "runs/safetensors_layout.hpp"
#include "util/atomic_file.hpp"
#include "util/error.hpp"
#include "util/json_text.hpp"
#include "util/sha256.hpp"

#if defined(__BYTE_ORDER__) && __BYTE_ORDER__ != __ORDER_LITTLE_ENDIAN__
#error "safetensors.cpp copies tensor bytes as they are: it needs a little-endian host"
#endif

namespace fs = std::filesystem;

namespace tinct {
namespace {

constexpr const char* kMetadataKey = "__metadata__";

struct DtypeName {
  torch::ScalarType type;
  const char* name;
};

constexpr DtypeName kDtypes[] = {
    {torch::kDouble, "F64"}, {torch::kFloat, "F32"}, {torch::kHalf, "F16"},
    {torch::kBFloat16, "BF16"}, {torch::kLong, "I64"}, {torch::kInt, "I32"},
    {torch::kShort, "I16"}, {torch::kChar, "I8"}, {torch::kByte, "U8"},
    {torch::kBool, "BOOL"},
};

const char* dtype_name(torch::ScalarType type, const std::string& tensor) {
  for (const auto& entry : kDtypes) {
    if (entry.type == type) return entry.name;
  }
  fail_runtime(std::string("safetensors: tensor '") + tensor + "' has dtype " +
               c10::toString(type) + ", which tinct does not write; convert it first");
}

// ---- writing

void check_names(const NamedTensors& tensors) {
  std::set<std::string> seen;
  for (const auto& [name, tensor] : tensors) {
    if (name.empty() || name == kMetadataKey || !seen.insert(name).second) {
      fail_runtime("safetensors: tensor name '" + name +
                   "' is empty, reserved or repeated; names must be unique");
    }
    TORCH_CHECK(tensor.defined(), "safetensors: tensor '", name, "' is undefined");
  }
}

NamedTensors contiguous_on_cpu(const NamedTensors& tensors) {
  NamedTensors out;
  for (const auto& [name, tensor] : tensors) {
    out.emplace_back(name, tensor.detach().to(torch::kCPU).contiguous());
  }
  return out;
}

std::string header_text(const NamedTensors& tensors,
                        const std::map<std::string, std::string>& metadata) {
  Json header = Json::object();
  if (!metadata.empty()) {
    Json entries = Json::object();
    for (const auto& [key, value] : metadata) entries[key] = value;
    header[kMetadataKey] = entries;
  }
  std::int64_t offset = 0;
  for (const auto& [name, tensor] : tensors) {
    const std::int64_t end = offset + tensor.numel() * tensor.element_size();
    Json entry = Json::object();
    entry["dtype"] = dtype_name(tensor.scalar_type(), name);
    entry["shape"] = tensor.sizes().vec();
    entry["data_offsets"] = {offset, end};
    header[name] = entry;
    offset = end;
  }
  std::string text = json_text(header);
  text.append((8 - text.size() % 8) % 8, ' ');  // 8 + N is then a multiple of 8
  return text;
}

std::string little_endian_u64(std::uint64_t value) {
  std::string bytes(8, '\0');
  for (int i = 0; i < 8; ++i) bytes[i] = static_cast<char>((value >> (8 * i)) & 0xff);
  return bytes;
}

// ---- reading

torch::ScalarType dtype_from_name(const std::string& dtype) {
  for (const auto& entry : kDtypes) {
    if (dtype == entry.name) return entry.type;
  }
  fail_runtime("safetensors: dtype \"" + dtype + "\" has no tensor type");  // the layout reader checked it
}

std::string read_whole_file(const fs::path& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) {
    fail_runtime("cannot read " + path.string() + ": " + std::strerror(errno) +
                 "; check the path");
  }
  return std::string(std::istreambuf_iterator<char>(in), {});
}

}  // namespace

void write_safetensors(const fs::path& path, const NamedTensors& tensors,
                       const std::map<std::string, std::string>& metadata) {
  check_names(tensors);
  const NamedTensors cpu_tensors = contiguous_on_cpu(tensors);
  const std::string header = header_text(cpu_tensors, metadata);

  AtomicFile out(path);
  out.write(little_endian_u64(header.size()) + header);
  for (const auto& [name, tensor] : cpu_tensors) {
    out.write(tensor.data_ptr(), static_cast<std::size_t>(tensor.numel() * tensor.element_size()));
  }
  out.commit();
}

std::string safetensors_data_sha256(const NamedTensors& tensors) {
  Sha256 hash;
  for (const auto& [name, tensor] : contiguous_on_cpu(tensors)) {
    hash.update(tensor.data_ptr(), static_cast<std::size_t>(tensor.numel() * tensor.element_size()));
  }
  return hash.hex_digest();
}

NamedTensors read_safetensors(const fs::path& path, std::map<std::string, std::string>* metadata) {
  const std::string bytes = read_whole_file(path);
  const SafetensorsLayout layout = read_safetensors_layout(bytes, path);
  if (metadata != nullptr) *metadata = layout.metadata;
  const char* data = bytes.data() + layout.data_offset;
  NamedTensors tensors;
  for (const auto& entry : layout.entries) {
    torch::Tensor tensor = torch::empty(entry.shape, torch::TensorOptions().dtype(dtype_from_name(entry.dtype)));
    if (entry.end > entry.begin) {
      std::memcpy(tensor.data_ptr(), data + entry.begin, entry.end - entry.begin);
    }
    tensors.emplace_back(entry.name, std::move(tensor));
  }
  return tensors;
}

}  // namespace tinct
