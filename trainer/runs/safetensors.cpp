// Writing and reading safetensors files (safetensors.hpp): the header through tinct's Json
// writer, read back by a small parser for the format's JSON subset; every offset and size is
// checked against the file before any byte is copied.
#include "runs/safetensors.hpp"

#include <algorithm>
#include <cerrno>
#include <cstdint>
#include <cstring>
#include <fstream>
#include <set>
#include <system_error>

#include "util/atomic_file.hpp"
#include "util/error.hpp"
#include "util/json.hpp"

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
    for (const auto& [key, value] : metadata) entries.set(key, value);
    header.set(kMetadataKey, entries);
  }
  std::int64_t offset = 0;
  for (const auto& [name, tensor] : tensors) {
    Json shape = Json::array();
    for (const std::int64_t size : tensor.sizes()) shape.push(size);
    const std::int64_t end = offset + tensor.numel() * tensor.element_size();
    Json offsets = Json::array();
    offsets.push(offset).push(end);
    Json entry = Json::object();
    entry.set("dtype", dtype_name(tensor.scalar_type(), name))
        .set("shape", shape)
        .set("data_offsets", offsets);
    header.set(name, entry);
    offset = end;
  }
  std::string text = header.dump();
  text.append((8 - text.size() % 8) % 8, ' ');  // 8 + N is then a multiple of 8
  return text;
}

std::string little_endian_u64(std::uint64_t value) {
  std::string bytes(8, '\0');
  for (int i = 0; i < 8; ++i) bytes[i] = static_cast<char>((value >> (8 * i)) & 0xff);
  return bytes;
}

// ---- reading: the JSON subset of the header (objects, arrays, strings, integers >= 0)

struct HeaderValue {
  enum class Kind { text, integer, array, object };
  Kind kind = Kind::text;
  std::string text;
  std::uint64_t integer = 0;
  std::vector<HeaderValue> items;
  std::vector<std::pair<std::string, HeaderValue>> members;
};

class HeaderParser {
 public:
  HeaderParser(const std::string& text, const fs::path& file) : text_(text), file_(file) {}

  HeaderValue parse_document() {
    if (text_.empty() || text_[0] != '{') fail("the header must start with '{'");
    HeaderValue document = parse_value(0);
    skip_space();
    if (pos_ != text_.size()) fail("unexpected text after the header object");
    return document;
  }

 private:
  [[noreturn]] void fail(const std::string& what) const {
    fail_runtime("cannot read " + file_.string() + ": safetensors header, byte " +
                 std::to_string(pos_) + ": " + what +
                 "; the file is damaged or not safetensors");
  }

  void skip_space() {
    while (pos_ < text_.size() && is_space(text_[pos_])) ++pos_;
  }

  static bool is_space(char c) { return c == ' ' || c == '\t' || c == '\n' || c == '\r'; }

  char peek() {
    skip_space();
    if (pos_ >= text_.size()) fail("unexpected end of the header");
    return text_[pos_];
  }

  void expect(char c) {
    if (peek() != c) fail(std::string("expected '") + c + "'");
    ++pos_;
  }

  HeaderValue parse_value(int depth) {
    if (depth > kMaxHeaderDepth) fail("nested too deeply");
    const char c = peek();
    HeaderValue value;
    if (c == '{') {
      value.kind = HeaderValue::Kind::object;
      parse_sequence('}', [&] {
        std::string key = parse_string();
        expect(':');
        value.members.emplace_back(std::move(key), parse_value(depth + 1));
      });
    } else if (c == '[') {
      value.kind = HeaderValue::Kind::array;
      parse_sequence(']', [&] { value.items.push_back(parse_value(depth + 1)); });
    } else if (c == '"') {
      value.text = parse_string();
    } else if (c >= '0' && c <= '9') {
      value.kind = HeaderValue::Kind::integer;
      value.integer = parse_integer();
    } else {
      fail("expected an object, array, string or non-negative integer");
    }
    return value;
  }

  // The elements of `[...]` or `{...}`, comma-separated; the opening bracket is next.
  template <typename ParseElement>
  void parse_sequence(char close, ParseElement parse_element) {
    ++pos_;
    if (peek() == close) {
      ++pos_;
      return;
    }
    while (true) {
      parse_element();
      if (peek() == close) break;
      expect(',');
    }
    ++pos_;
  }

  std::uint64_t parse_integer() {
    std::uint64_t value = 0;
    while (pos_ < text_.size() && text_[pos_] >= '0' && text_[pos_] <= '9') {
      const auto digit = static_cast<std::uint64_t>(text_[pos_] - '0');
      if (value > (UINT64_MAX - digit) / 10) fail("integer too large");
      value = value * 10 + digit;
      ++pos_;
    }
    const char next = pos_ < text_.size() ? text_[pos_] : ' ';
    if (next == '.' || next == 'e' || next == 'E') fail("expected an integer");
    return value;
  }

  std::string parse_string() {
    expect('"');
    std::string out;
    while (true) {
      if (pos_ >= text_.size()) fail("unterminated string");
      const char c = text_[pos_++];
      if (c == '"') return out;
      if (static_cast<unsigned char>(c) < 0x20) fail("control character in a string");
      if (c != '\\') {
        out += c;
        continue;
      }
      if (pos_ >= text_.size()) fail("unterminated string");
      const char escaped = text_[pos_++];
      switch (escaped) {
        case '"': out += '"'; break;
        case '\\': out += '\\'; break;
        case '/': out += '/'; break;
        case 'b': out += '\b'; break;
        case 'f': out += '\f'; break;
        case 'n': out += '\n'; break;
        case 'r': out += '\r'; break;
        case 't': out += '\t'; break;
        case 'u': append_utf8(out, parse_code_point()); break;
        default: fail(std::string("unknown escape \\") + escaped);
      }
    }
  }

  unsigned parse_hex4() {
    if (pos_ + 4 > text_.size()) fail("short \\u escape");
    unsigned value = 0;
    for (int i = 0; i < 4; ++i) {
      const char c = text_[pos_++];
      value <<= 4;
      if (c >= '0' && c <= '9') value |= static_cast<unsigned>(c - '0');
      else if (c >= 'a' && c <= 'f') value |= static_cast<unsigned>(c - 'a' + 10);
      else if (c >= 'A' && c <= 'F') value |= static_cast<unsigned>(c - 'A' + 10);
      else fail("bad \\u escape");
    }
    return value;
  }

  // After "\u": one code point, joining a UTF-16 surrogate pair.
  unsigned parse_code_point() {
    const unsigned high = parse_hex4();
    if (high < 0xD800 || high > 0xDFFF) return high;
    if (high > 0xDBFF || text_.compare(pos_, 2, "\\u") != 0) fail("unpaired surrogate");
    pos_ += 2;
    const unsigned low = parse_hex4();
    if (low < 0xDC00 || low > 0xDFFF) fail("unpaired surrogate");
    return 0x10000 + ((high - 0xD800) << 10) + (low - 0xDC00);
  }

  static void append_utf8(std::string& out, unsigned code) {
    if (code < 0x80) {
      out += static_cast<char>(code);
    } else if (code < 0x800) {
      out += static_cast<char>(0xC0 | (code >> 6));
      out += static_cast<char>(0x80 | (code & 0x3F));
    } else if (code < 0x10000) {
      out += static_cast<char>(0xE0 | (code >> 12));
      out += static_cast<char>(0x80 | ((code >> 6) & 0x3F));
      out += static_cast<char>(0x80 | (code & 0x3F));
    } else {
      out += static_cast<char>(0xF0 | (code >> 18));
      out += static_cast<char>(0x80 | ((code >> 12) & 0x3F));
      out += static_cast<char>(0x80 | ((code >> 6) & 0x3F));
      out += static_cast<char>(0x80 | (code & 0x3F));
    }
  }

  const std::string& text_;
  const fs::path& file_;
  std::size_t pos_ = 0;
};

// ---- reading: from the parsed header to tensors

struct TensorEntry {
  std::string name;
  torch::ScalarType type;
  std::vector<std::int64_t> shape;
  std::uint64_t begin, end;
};

[[noreturn]] void fail_layout(const fs::path& file, const std::string& what) {
  fail_runtime("cannot read " + file.string() + ": " + what +
               "; the file is damaged or not safetensors");
}

const HeaderValue& member(const HeaderValue& object, const std::string& key,
                          HeaderValue::Kind kind, const fs::path& file, const std::string& name) {
  for (const auto& [k, v] : object.members) {
    if (k == key && v.kind == kind) return v;
  }
  fail_layout(file, "tensor '" + name + "' lacks a valid \"" + key + "\"");
}

torch::ScalarType dtype_from_name(const std::string& dtype, const fs::path& file,
                                  const std::string& name) {
  for (const auto& entry : kDtypes) {
    if (dtype == entry.name) return entry.type;
  }
  fail_layout(file,
              "tensor '" + name + "' has dtype \"" + dtype + "\", which tinct does not read");
}

TensorEntry tensor_entry(const std::string& name, const HeaderValue& value,
                         const fs::path& file) {
  using Kind = HeaderValue::Kind;
  if (value.kind != Kind::object) fail_layout(file, "tensor '" + name + "' is not an object");
  TensorEntry entry{name, dtype_from_name(member(value, "dtype", Kind::text, file, name).text,
                                          file, name), {}, 0, 0};
  for (const auto& size : member(value, "shape", Kind::array, file, name).items) {
    if (size.kind != Kind::integer || size.integer > (1ull << 62)) {
      fail_layout(file, "tensor '" + name + "' has a bad shape");
    }
    entry.shape.push_back(static_cast<std::int64_t>(size.integer));
  }
  const auto& offsets = member(value, "data_offsets", Kind::array, file, name).items;
  if (offsets.size() != 2 || offsets[0].kind != Kind::integer ||
      offsets[1].kind != Kind::integer || offsets[1].integer < offsets[0].integer) {
    fail_layout(file, "tensor '" + name + "' needs data_offsets [begin, end] with begin <= end");
  }
  entry.begin = offsets[0].integer;
  entry.end = offsets[1].integer;
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

std::map<std::string, std::string> metadata_of(const HeaderValue& value, const fs::path& file) {
  if (value.kind != HeaderValue::Kind::object) fail_layout(file, "__metadata__ is not an object");
  std::map<std::string, std::string> out;
  for (const auto& [key, entry] : value.members) {
    if (entry.kind != HeaderValue::Kind::text) {
      fail_layout(file, "__metadata__ value of '" + key + "' is not a string");
    }
    out[key] = entry.text;
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

}  // namespace

void write_safetensors(const fs::path& path, const NamedTensors& tensors,
                       const std::map<std::string, std::string>& metadata) {
  check_names(tensors);
  const NamedTensors cpu_tensors = contiguous_on_cpu(tensors);
  const std::string header = header_text(cpu_tensors, metadata);

  const fs::path temporary = temporary_sibling(path);
  {
    std::ofstream out(temporary, std::ios::binary | std::ios::trunc);
    if (!out) {
      fail_runtime("cannot write " + path.string() + ": " + std::strerror(errno) +
                   "; check that the folder exists and is writable");
    }
    out << little_endian_u64(header.size()) << header;
    for (const auto& [name, tensor] : cpu_tensors) {
      out.write(static_cast<const char*>(tensor.data_ptr()),
                static_cast<std::streamsize>(tensor.numel() * tensor.element_size()));
    }
    out.flush();
    if (!out) {
      std::error_code ec;
      fs::remove(temporary, ec);
      fail_runtime("cannot write " + path.string() + ": write failed (disk full?)");
    }
  }
  commit_file(temporary, path);
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
  const std::string header_text = bytes.substr(8, header_size);
  const HeaderValue header = HeaderParser(header_text, path).parse_document();
  const char* data = bytes.data() + 8 + header_size;
  const std::uint64_t data_size = bytes.size() - 8 - header_size;

  if (metadata != nullptr) metadata->clear();
  std::vector<TensorEntry> entries;
  std::set<std::string> seen;
  for (const auto& [name, value] : header.members) {
    if (!seen.insert(name).second) {
      fail_layout(path, "the header repeats the key '" + name + "'");
    }
    if (name == kMetadataKey) {
      std::map<std::string, std::string> entries = metadata_of(value, path);  // checked always
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
