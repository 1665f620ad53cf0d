// The eight symmetries of the square (identity, three 90-degree rotations, and the
// same after a horizontal flip), applied alike to every plane of a chip (bands,
// colour, validity) so inputs and targets stay on the same ground.
#pragma once

#include <cstddef>

namespace tinct {

constexpr int kSymmetries = 8;

// Source (row, col) of output pixel (row, col) under `symmetry` (0..7) on a size x size chip.
inline void symmetry_source(int symmetry, int size, int row, int col, int& src_row, int& src_col) {
  const int last = size - 1;
  int r = row, c = symmetry >= 4 ? last - col : col;  // flip first
  switch (symmetry % 4) {
    case 0: src_row = r; src_col = c; break;
    case 1: src_row = last - c; src_col = r; break;  // rotate 90 degrees clockwise
    case 2: src_row = last - r; src_col = last - c; break;
    default: src_row = c; src_col = last - r; break;
  }
}

template <typename T>
void apply_symmetry(int symmetry, const T* in, T* out, int planes, int size) {
  const std::size_t area = static_cast<std::size_t>(size) * size;
  for (int row = 0; row < size; ++row) {
    for (int col = 0; col < size; ++col) {
      int src_row = 0, src_col = 0;
      symmetry_source(symmetry, size, row, col, src_row, src_col);
      const std::size_t to = static_cast<std::size_t>(row) * size + col;
      const std::size_t from = static_cast<std::size_t>(src_row) * size + src_col;
      for (int p = 0; p < planes; ++p) out[p * area + to] = in[p * area + from];
    }
  }
}

}  // namespace tinct
