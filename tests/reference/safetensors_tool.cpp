// The C++ side of the safetensors reference test (safetensors_vs_numpy.py):
//   safetensors_tool write FILE DUMP   writes a sample of every dtype with write_safetensors
//   safetensors_tool dump FILE DUMP    reads FILE with read_safetensors
// and in both cases writes DUMP, a JSON list of what tinct holds (names, dtypes, shapes, values
// as exact decimals), which the script compares with its own numpy reading or writing.
#include <cstdint>
#include <iostream>
#include <map>
#include <string>

#include "runs/safetensors.hpp"
#include "util/atomic_file.hpp"
#include "util/error.hpp"
#include "util/json_text.hpp"

namespace {

tinct::NamedTensors sample_tensors() {
  return {
      {"ramp_f32", torch::arange(12, torch::kFloat).view({3, 4}) / 8},
      {"f64", torch::tensor({0.1, -1e-300, 1e300, 1.0 / 3}, torch::kDouble)},
      {"f16", torch::tensor({1.5, -2.0, 0.333, 65504.0}).to(torch::kHalf)},
      {"bf16", torch::tensor({1.0, -3.140625, 1e-3}).to(torch::kBFloat16)},
      {"i64", torch::tensor({-(std::int64_t{1} << 62), std::int64_t{-1}, std::int64_t{1} << 40})},
      {"i32", torch::tensor({-2147483647 - 1, 2147483647}, torch::kInt)},
      {"i16", torch::tensor({-32768, 32767}, torch::kShort)},
      {"i8", torch::tensor({-128, 127}, torch::kChar)},
      {"u8", torch::tensor({0, 1, 127, 128, 255}, torch::kByte).view({5, 1})},
      {"bool", torch::tensor({1, 0, 1}).to(torch::kBool)},
      {"scalar", torch::tensor(2.5)},
      {"empty", torch::zeros({0, 3})},
      {"transposed", torch::arange(6, torch::kFloat).view({2, 3}).t()},  // not contiguous
  };
}

const std::map<std::string, std::string>& sample_metadata() {
  static const std::map<std::string, std::string> metadata = {
      {"format", "tinct-test"},
      {"escapes", "quote \" backslash \\ newline \n tab \t"},
      {"unicode", "Lab \xc3\xa9 \xe2\x88\x86"},  // e-acute, increment sign
  };
  return metadata;
}

tinct::Json values_of(const torch::Tensor& tensor) {
  tinct::Json values = tinct::Json::array();
  const torch::Tensor flat = tensor.flatten();
  if (tensor.is_floating_point()) {
    const torch::Tensor exact = flat.to(torch::kDouble);  // F16 and BF16 are exact in double
    for (std::int64_t i = 0; i < exact.numel(); ++i) values.push_back(exact[i].item<double>());
  } else {
    const torch::Tensor exact = flat.to(torch::kLong);
    for (std::int64_t i = 0; i < exact.numel(); ++i) {
      values.push_back(static_cast<std::int64_t>(exact[i].item<std::int64_t>()));
    }
  }
  return values;
}

std::string dump(const tinct::NamedTensors& tensors,
                 const std::map<std::string, std::string>& metadata) {
  tinct::Json meta = tinct::Json::object();
  for (const auto& [key, value] : metadata) meta[key] = value;
  tinct::Json list = tinct::Json::array();
  for (const auto& [name, tensor] : tensors) {
    tinct::Json shape = tinct::Json::array();
    for (const std::int64_t size : tensor.sizes()) shape.push_back(size);
    tinct::Json entry = tinct::Json::object();
    entry["name"] = name;
    entry["dtype"] = std::string(c10::toString(tensor.scalar_type()));
    entry["shape"] = shape;
    entry["values"] = values_of(tensor);
    list.push_back(entry);
  }
  tinct::Json out = tinct::Json::object();
  out["metadata"] = meta;
  out["tensors"] = list;
  return tinct::json_text(out, 1) + "\n";
}

int run(const std::string& mode, const std::string& file, const std::string& dump_path) {
  if (mode == "write") {
    tinct::write_safetensors(file, sample_tensors(), sample_metadata());
    tinct::write_file_atomic(dump_path, dump(sample_tensors(), sample_metadata()));
    return 0;
  }
  if (mode == "dump") {
    std::map<std::string, std::string> metadata;
    const tinct::NamedTensors tensors = tinct::read_safetensors(file, &metadata);
    tinct::write_file_atomic(dump_path, dump(tensors, metadata));
    return 0;
  }
  std::cerr << "usage: safetensors_tool write|dump FILE DUMP\n";
  return 2;
}

}  // namespace

int main(int argc, char** argv) {
  if (argc != 4) return run("", "", "");
  try {
    return run(argv[1], argv[2], argv[3]);
  } catch (const tinct::Error& error) {
    std::cerr << "safetensors_tool: " << error.what() << "\n";
    return error.exit_code();
  } catch (const std::exception& error) {
    std::cerr << "safetensors_tool: " << error.what() << "\n";
    return 1;
  }
}
