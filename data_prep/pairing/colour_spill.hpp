// The colour planes of the chips pair keeps, parked in an unlinked temporary file
// until the scene's colour stretch is known (pair reads every pixel once and fits the
// stretch from that same pass). The file lives in $TMPDIR (else /tmp) and disappears
// when the process ends, however it ends.
#pragma once

#include <cstddef>
#include <cstdio>

namespace tinct {

class ColourSpill {
 public:
  explicit ColourSpill(std::size_t values_per_chip);
  ColourSpill(const ColourSpill&) = delete;
  ColourSpill& operator=(const ColourSpill&) = delete;
  ~ColourSpill();

  void put(const float* values);  // values_per_chip values, appended
  void rewind();                  // then get() returns them in the order put
  void get(float* values);

 private:
  std::size_t values_per_chip_;
  std::FILE* file_ = nullptr;
};

}  // namespace tinct
