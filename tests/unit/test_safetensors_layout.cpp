// The safetensors layout reader without LibTorch (runs/safetensors_layout).
#include <catch2/catch.hpp>

#include <cstdint>
#include <string>

#include "runs/safetensors_layout.hpp"
#include "util/error.hpp"

namespace {

// 8-byte little-endian header length, the header, then the data (the format's description).
std::string safetensors_bytes(const std::string& header, const std::string& data) {
  std::string bytes(8, '\0');
  for (int i = 0; i < 8; ++i) bytes[i] = static_cast<char>((header.size() >> (8 * i)) & 0xff);
  return bytes + header + data;
}

}  // namespace

TEST_CASE("the safetensors layout gives each tensor's dtype, shape and place in the data") {
  const std::string header =
      R"({"__metadata__":{"format":"pt"},"w":{"dtype":"F32","shape":[2,1],"data_offsets":[0,8]},)"
      R"("n":{"dtype":"I64","shape":[],"data_offsets":[8,16]}})";
  const tinct::SafetensorsLayout layout = tinct::read_safetensors_layout(safetensors_bytes(header, std::string(16, 'x')), "a.safetensors");
  REQUIRE(layout.entries.size() == 2);
  CHECK(layout.entries[0].name == "w");
  CHECK(layout.entries[0].shape == std::vector<std::int64_t>{2, 1});
  CHECK(layout.entries[1].dtype == "I64");
  CHECK(layout.entries[1].begin == 8);
  CHECK(layout.entries[1].end == 16);
  CHECK(layout.metadata.at("format") == "pt");
  CHECK(layout.data_offset == 8 + header.size());
  CHECK(tinct::safetensors_element_size("BF16") == 2);
  CHECK(tinct::safetensors_element_size("F8") == 0);
}

TEST_CASE("a safetensors header with a number beyond a double is refused naming the file") {
  // Found by the fuzz target (the whole input is in test_fuzz_regressions): nlohmann's
  // out_of_range escaped as an unexpected failure.
  const std::string bytes = safetensors_bytes(R"({"w":{"dtype":"F32","shape":[2e441],"data_offsets":[0,4]}})", "");
  CHECK_THROWS_WITH(tinct::read_safetensors_layout(bytes, "big.safetensors"),
                    Catch::Contains("cannot read big.safetensors: safetensors header: number overflow parsing '2e441'"));
}
