// Reading a safetensors file's layout (safetensors_layout.hpp): the header parsed by
// nlohmann::json (repeated keys refused while parsing); every offset and size is checked
// against the file before any byte is copied.
#include "runs/safetensors_layout.hpp"

#include <algorithm>
#include <set>

#include "util/error.hpp"
#include "util/json_text.hpp"
#include "util/sha256.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

constexpr const char* kMetadataKey = "__metadata__";
constexpr int kMaxHeaderDepth = 4;  // document -> tensor -> shape: 3 levels are used

struct DtypeSize {
  const char* name;
  int bytes;
};

constexpr DtypeSize kDtypeSizes[] = {
    {"F64", 8}, {"F32", 4}, {"F16", 2}, {"BF16", 2}, {"I64", 8},
    {"I32", 4}, {"I16", 2}, {"I8", 1},  {"U8", 1},   {"BOOL", 1},
};

[[noreturn]] void fail_layout(const fs::path& file, const std::string& what) {
  fail_runtime("cannot read " + file.string() + ": " + what + "; the file is damaged or not safetensors");
}

[[noreturn]] void fail_header(const fs::path& file, std::size_t byte, const std::string& what) {
  fail_layout(file, "safetensors header, byte " + std::to_string(byte) + ": " + what);
}

// "[json.exception.parse_error.101] parse error at ..." -> "parse error at ..."
std::string without_exception_id(const std::string& what) {
  const std::size_t end = what.find("] ");
  return end == std::string::npos ? what : what.substr(end + 2);
}

// Keys are checked for repeats as they are read (the format forbids them; a parsed
// object would keep only one).
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
    fail_header(file, e.byte, without_exception_id(e.what()));
  } catch (const Json::exception& e) {  // out_of_range: a number beyond a double, such as 2e441
    fail_layout(file, "safetensors header: " + without_exception_id(e.what()));
  }
}

const Json& member(const Json& object, const char* key, bool (Json::*is_kind)() const, const fs::path& file,
                   const std::string& name) {
  const auto found = object.find(key);
  if (found == object.end() || !((*found).*is_kind)()) {
    fail_layout(file, "tensor '" + name + "' lacks a valid \"" + key + "\"");
  }
  return *found;
}

SafetensorsEntry tensor_entry(const std::string& name, const Json& value, const fs::path& file) {
  if (!value.is_object()) fail_layout(file, "tensor '" + name + "' is not an object");
  SafetensorsEntry entry{name, member(value, "dtype", &Json::is_string, file, name).get<std::string>(), {}, 0, 0};
  if (safetensors_element_size(entry.dtype) == 0) {
    fail_layout(file, "tensor '" + name + "' has dtype \"" + entry.dtype + "\", which tinct does not read");
  }
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

std::uint64_t byte_size(const SafetensorsEntry& entry, const fs::path& file) {
  constexpr std::uint64_t kMaxElements = 1ull << 56;  // times 8 bytes still fits in u64
  std::uint64_t count = 1;
  for (const std::int64_t size : entry.shape) {
    const auto n = static_cast<std::uint64_t>(size);
    if (n != 0 && count > kMaxElements / n) {
      fail_layout(file, "tensor '" + entry.name + "' is too large");
    }
    count *= n;
  }
  return count * static_cast<std::uint64_t>(safetensors_element_size(entry.dtype));
}

// Every entry's size matches its shape, and the entries tile the data section exactly.
void check_tiling(std::vector<SafetensorsEntry> entries, std::uint64_t data_size, const fs::path& file) {
  for (const auto& entry : entries) {
    if (entry.end - entry.begin != byte_size(entry, file)) {
      fail_layout(file, "tensor '" + entry.name + "' has data_offsets that disagree with its shape");
    }
  }
  std::sort(entries.begin(), entries.end(), [](const SafetensorsEntry& a, const SafetensorsEntry& b) {
    return a.begin != b.begin ? a.begin < b.begin : a.end < b.end;
  });
  std::uint64_t covered = 0;
  for (const auto& entry : entries) {
    if (entry.begin != covered) {
      fail_layout(file, "tensor '" + entry.name + "' overlaps another or leaves a hole before it");
    }
    covered = entry.end;
  }
  if (covered != data_size) {
    fail_layout(file, "the data section holds " + std::to_string(data_size) + " bytes but the tensors cover " +
                          std::to_string(covered));
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

int safetensors_element_size(const std::string& dtype) {
  for (const auto& entry : kDtypeSizes) {
    if (dtype == entry.name) return entry.bytes;
  }
  return 0;
}

SafetensorsLayout read_safetensors_layout(const std::string& bytes, const fs::path& file) {
  if (bytes.size() < 8) fail_layout(file, "the file is shorter than its 8-byte header length");
  std::uint64_t header_size = 0;
  for (int i = 7; i >= 0; --i) {
    header_size = (header_size << 8) | static_cast<unsigned char>(bytes[i]);
  }
  if (header_size > bytes.size() - 8) {
    fail_layout(file, "header length " + std::to_string(header_size) + " exceeds the file");
  }
  const Json header = parse_header(bytes.substr(8, header_size), file);
  SafetensorsLayout layout;
  layout.data_offset = 8 + header_size;
  const char* data = bytes.data() + layout.data_offset;
  const std::uint64_t data_size = bytes.size() - layout.data_offset;
  for (const auto& [name, value] : header.items()) {
    if (name == kMetadataKey) {
      layout.metadata = metadata_of(value, file);
      check_data_checksum(layout.metadata, data, data_size, file);
      continue;
    }
    layout.entries.push_back(tensor_entry(name, value, file));
  }
  check_tiling(layout.entries, data_size, file);
  return layout;
}

}  // namespace tinct
