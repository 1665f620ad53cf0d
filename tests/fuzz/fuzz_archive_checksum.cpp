// Fuzz target: a model archive's checksum trailer (runs/archive_checksum): the check a
// loader runs before LibTorch sees the file, and the trailer a writer would append.
#include <cstddef>
#include <cstdint>

#include "fuzz_input.hpp"
#include "runs/archive_checksum.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const auto file = tinct::fuzz::input_file("model.pt", data, size);
  tinct::fuzz::expect_clean_refusal([&] { tinct::check_archive_checksum(file); });
  const std::string bytes = tinct::fuzz::as_text(data, size);
  const std::string tail = bytes.size() >= 22 ? bytes.substr(bytes.size() - 22) : bytes;
  tinct::archive_trailer(tail, bytes.size(), std::string(64, 'a'));
  return 0;
}
