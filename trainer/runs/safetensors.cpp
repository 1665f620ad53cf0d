// Writing and reading safetensors files (safetensors.hpp): the header written and parsed
// by nlohmann::json (repeated keys refused while parsing); every offset and size is checked
// against the file before any byte is copied.
#include "runs/safetensors.hpp"

#include <algorithm>
#include <cerrno>
#include <cstdint>
#include <cstring>
#include <fstream>
#include <set>

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
constexpr int kMaxHeaderDepth = 4;  // document -> tensor -> shape: 3 levels are used

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

// ---- reading: the header through nlohmann's parser, keys checked for repeats as
// they are read (the format forbids them; a parsed object would keep only one)

[[noreturn]] void fail_layout(const fs::path& file, const std::string& what) {
  fail_runtime("cannot read " + file.string() + ": " + what + "; the file is damaged or not safetensors");
}

[[noreturn]] void fail_header(const fs::path& file, std::size_t byte, const std::string& what) {
  fail_layout(file, "safetensors header, byte " + std::to_string(byte) + ": " + what);
}

Json parse_header(const std::string& text, const fs::path& file) {
  if (text.empty() || text[0] != '{') fail_header(file, 0, "the header must start with '{'");
  std::vector<std::set<std::string>> keys;  // one set per open object
  const Json::parser_callback_t check = [&](int depth, Json::parse_event_t event, Json& parsed) {
    if (depth > kMaxHeaderDepth) fail_layout(file, "the safetensors header is nested too deeply");
    if (event == Json::parse_event_t::object_start) keys.emplace_back();
    if (event == Json::parse_event_t::object_end) keys.pop_back();
    if (event == Json::parse_event_t::key && !keys.back().insert(parsed.get<std::string>()).second) {
      fail_layout(file, "the header repeats the key '" + parsed.get<std::string>() + "'");
    }
    return true;
  };
  try {
    return Json::parse(text, check);
  } catch (const Json::parse_error& e) {
    const std::string what = e.what();  // "[json.exception.parse_error.101] parse error at ..."
    fail_header(file, e.byte, what.substr(what.find("] ") == std::string::npos ? 0 : what.find("] ") + 2));
  }
}

// ---- reading: from the parsed header to tensors

struct TensorEntry {
  std::string name;
  torch::ScalarType type;
  std::vector<std::int64_t> shape;
  std::uint64_t begin, end;
};

const Json& member(const Json& object, const char* key, bool (Json::*is_kind)() const, const fs::path& file,
                   const std::string& name) {
  const auto found = object.find(key);
  if (found == object.end() || !((*found).*is_kind)()) {
    fail_layout(file, "tensor '" + name + "' lacks a valid \"" + key + "\"");
  }
  return *found;
}

torch::ScalarType dtype_from_name(const std::string& dtype, const fs::path& file, const std::string& name) {
  for (const auto& entry : kDtypes) {
    if (dtype == entry.name) return entry.type;
  }
  fail_layout(file, "tensor '" + name + "' has dtype \"" + dtype + "\", which tinct does not read");
}

TensorEntry tensor_entry(const std::string& name, const Json& value, const fs::path& file) {
  if (!value.is_object()) fail_layout(file, "tensor '" + name + "' is not an object");
  const std::string dtype = member(value, "dtype", &Json::is_string, file, name).get<std::string>();
  TensorEntry entry{name, dtype_from_name(dtype, file, name), {}, 0, 0};
  for (const Json& size : member(value, "shape", &Json::is_array, file, name)) {
    if (!size.is_number_unsigned() || size.get<std::uint64_t>() > (1ull << 62)) {
      fail_layout(file, "tensor '" + name + "' has a bad shape");
    }
    entry.shape.push_back(size.get<std::int64_t>());
  }
  const Json& offsets = member(value, "data_offsets", &Json::is_array, file, name);
  if (offsets.size() != 2 || !offsets[0].is_number_unsigned() || !offsets[1].is_number_unsigned() ||
      offsets[1].get<std::uint64_t>() < offsets[0].get<std::uint64_t>()) {
    fail_layout(file, "tensor '" + name + "' needs data_offsets [begin, end] with begin <= end");
  }
  entry.begin = offsets[0].get<std::uint64_t>();
  entry.end = offsets[1].get<std::uint64_t>();
  return entry;
}

std::uint64_t byte_size(const TensorEntry& entry, const fs::path& file) {
  constexpr std::uint64_t kMaxElements = 1ull << 56;  // times 8 bytes still fits in u64
  std::uint64_t count = 1;
  for (const std::int64_t size : entry.shape) {
    const auto n = static_cast<std::uint64_t>(size);
    if (n != 0 && count > kMaxElements / n) {
      fail_layout(file, "tensor '" + entry.name + "' is too large");
    }
    count *= n;
  }
  return count * c10::elementSize(entry.type);
}

// Every entry's size matches its shape, and the entries tile the data section exactly.
void check_layout(std::vector<TensorEntry> entries, std::uint64_t data_size,
                  const fs::path& file) {
  for (const auto& entry : entries) {
    if (entry.end - entry.begin != byte_size(entry, file)) {
      fail_layout(file,
                  "tensor '" + entry.name + "' has data_offsets that disagree with its shape");
    }
  }
  std::sort(entries.begin(), entries.end(),
            [](const TensorEntry& a, const TensorEntry& b) {
              return a.begin != b.begin ? a.begin < b.begin : a.end < b.end;
            });
  std::uint64_t covered = 0;
  for (const auto& entry : entries) {
    if (entry.begin != covered) {
      fail_layout(file,
                  "tensor '" + entry.name + "' overlaps another or leaves a hole before it");
    }
    covered = entry.end;
  }
  if (covered != data_size) {
    fail_layout(file, "the data section holds " + std::to_string(data_size) +
                          " bytes but the tensors cover " + std::to_string(covered));
  }
}

std::map<std::string, std::string> metadata_of(const Json& value, const fs::path& file) {
  if (!value.is_object()) fail_layout(file, "__metadata__ is not an object");
  std::map<std::string, std::string> out;
  for (const auto& [key, entry] : value.items()) {
    if (!entry.is_string()) fail_layout(file, "__metadata__ value of '" + key + "' is not a string");
    out[key] = entry.get<std::string>();
  }
  return out;
}

std::string read_whole_file(const fs::path& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) {
    fail_runtime("cannot read " + path.string() + ": " + std::strerror(errno) +
                 "; check the path");
  }
  return std::string(std::istreambuf_iterator<char>(in), {});
}

void check_data_checksum(const std::map<std::string, std::string>& metadata, const char* data,
                         std::uint64_t data_size, const fs::path& file) {
  const auto recorded = metadata.find(kDataChecksumKey);
  if (recorded == metadata.end()) return;
  Sha256 hash;
  hash.update(data, static_cast<std::size_t>(data_size));
  const std::string found = hash.hex_digest();
  if (found != recorded->second) {
    fail_runtime(file.string() + " is damaged: the SHA-256 of its tensor data is " + found.substr(0, 16) +
                 "..., not the " + recorded->second.substr(0, 16) + "... in its header (" + kDataChecksumKey +
                 "). Export it again");
  }
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
  if (bytes.size() < 8) fail_layout(path, "the file is shorter than its 8-byte header length");
  std::uint64_t header_size = 0;
  for (int i = 7; i >= 0; --i) {
    header_size = (header_size << 8) | static_cast<unsigned char>(bytes[i]);
  }
  if (header_size > bytes.size() - 8) {
    fail_layout(path, "header length " + std::to_string(header_size) + " exceeds the file");
  }
  const Json header = parse_header(bytes.substr(8, header_size), path);
  const char* data = bytes.data() + 8 + header_size;
  const std::uint64_t data_size = bytes.size() - 8 - header_size;

  if (metadata != nullptr) metadata->clear();
  std::vector<TensorEntry> entries;
  for (const auto& [name, value] : header.items()) {
    if (name == kMetadataKey) {
      std::map<std::string, std::string> entries = metadata_of(value, path);  // checked always
      check_data_checksum(entries, data, data_size, path);
      if (metadata != nullptr) *metadata = std::move(entries);
      continue;
    }
    entries.push_back(tensor_entry(name, value, path));
  }
  check_layout(entries, data_size, path);

  NamedTensors tensors;
  for (const auto& entry : entries) {
    torch::Tensor tensor = torch::empty(entry.shape, torch::TensorOptions().dtype(entry.type));
    if (entry.end > entry.begin) {
      std::memcpy(tensor.data_ptr(), data + entry.begin, entry.end - entry.begin);
    }
    tensors.emplace_back(entry.name, std::move(tensor));
  }
  return tensors;
}

}  // namespace tinct
