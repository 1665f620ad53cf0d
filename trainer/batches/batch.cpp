#include "batches/batch.hpp"

#include "batches/chip_symmetry.hpp"

namespace tinct {
namespace {

void normalise(const BandNormalisation& norm, const std::uint8_t* valid, int size, float* planes) {
  const std::size_t area = static_cast<std::size_t>(size) * size;
  for (std::size_t b = 0; b < norm.bands.size(); ++b) {
    const float mean = static_cast<float>(norm.mean[b]);
    const float inverse_std = static_cast<float>(1.0 / norm.std[b]);
    float* plane = planes + b * area;
    for (std::size_t i = 0; i < area; ++i) plane[i] = valid[i] ? (plane[i] - mean) * inverse_std : 0.0f;
  }
}

}  // namespace

Batch assemble_batch(const ChipCollection& collection, const std::vector<ChipRef>& chips,
                     const std::vector<int>& symmetries) {
  const auto count = static_cast<std::int64_t>(chips.size());
  const int size = collection.chip_size();
  const int bands = collection.band_count();
  const std::size_t area = static_cast<std::size_t>(size) * size;
  const bool with_colour = collection.store(chips.front().store).has_colour();
  Batch batch;
  batch.chips = chips;
  batch.bands = torch::empty({count, bands, size, size}, torch::kFloat32);
  batch.valid = torch::empty({count, size, size}, torch::kBool);
  if (with_colour) batch.colour = torch::empty({count, 3, size, size}, torch::kUInt8);
  const bool with_labels = !collection.classes().empty();
  if (with_labels) batch.labels = torch::empty({count}, torch::kInt64);
  std::vector<float> reflectance(bands * area);
  std::vector<std::uint8_t> valid(area);
  for (std::int64_t i = 0; i < count; ++i) {
    const StoreReader& store = collection.store(chips[i].store);
    const std::int64_t chip = chips[i].chip;
    const int symmetry = symmetries[static_cast<std::size_t>(i)];
    store.read_reflectance(chip, reflectance.data());
    collection.note_read(chips[i]);
    normalise(collection.normalisation(), store.valid(chip), size, reflectance.data());
    apply_symmetry(symmetry, reflectance.data(), batch.bands[i].data_ptr<float>(), bands, size);
    apply_symmetry(symmetry, store.valid(chip), valid.data(), 1, size);
    std::copy(valid.begin(), valid.end(), reinterpret_cast<std::uint8_t*>(batch.valid[i].data_ptr<bool>()));
    if (with_colour) apply_symmetry(symmetry, store.colour(chip), batch.colour[i].data_ptr<std::uint8_t>(), 3, size);
    if (with_labels) batch.labels[i] = collection.class_of(chips[i]);
    store.release(chip);
  }
  return batch;
}

}  // namespace tinct
