#include "pairing/colour_spill.hpp"

#include <unistd.h>

#include <cerrno>
#include <cstdlib>
#include <cstring>
#include <string>

#include "util/error.hpp"

namespace tinct {
namespace {

std::string temporary_folder() {
  const char* folder = std::getenv("TMPDIR");
  return folder && *folder ? folder : "/tmp";
}

}  // namespace

ColourSpill::ColourSpill(std::size_t values_per_chip) : values_per_chip_(values_per_chip) {
  std::string name = temporary_folder() + "/tinct-colour-XXXXXX";
  const int fd = ::mkstemp(name.data());
  if (fd < 0) {
    fail_runtime("cannot create a temporary file in " + temporary_folder() + ": " + std::strerror(errno) +
                 "; set TMPDIR to a writable folder");
  }
  ::unlink(name.c_str());
  file_ = ::fdopen(fd, "w+b");
  if (!file_) {
    ::close(fd);
    fail_runtime("cannot open a temporary file in " + temporary_folder() + ": " + std::strerror(errno));
  }
}

ColourSpill::~ColourSpill() {
  if (file_) std::fclose(file_);
}

void ColourSpill::put(const float* values) {
  if (std::fwrite(values, sizeof(float), values_per_chip_, file_) != values_per_chip_) {
    fail_runtime("cannot write the colour of a chip to a temporary file in " + temporary_folder() + ": " +
                 std::strerror(errno) + "; free space there or set TMPDIR to a folder with room");
  }
}

void ColourSpill::rewind() {
  if (std::fflush(file_) != 0 || std::fseek(file_, 0, SEEK_SET) != 0) {
    fail_runtime("cannot read back a temporary file in " + temporary_folder() + ": " + std::strerror(errno));
  }
}

void ColourSpill::get(float* values) {
  if (std::fread(values, sizeof(float), values_per_chip_, file_) != values_per_chip_) {
    fail_runtime("cannot read back the colour of a chip from a temporary file in " + temporary_folder());
  }
}

}  // namespace tinct
