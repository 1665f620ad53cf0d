// c10 defines a CHECK macro of its own; Catch's must win.
#include <torch/torch.h>
#undef CHECK
#include <catch2/catch.hpp>

#include <signal.h>
#include <sys/wait.h>
#include <unistd.h>

#include <cmath>
#include <numeric>
#include <set>

#include "batches/batch.hpp"
#include "batches/batch_loader.hpp"
#include "batches/batch_order.hpp"
#include "batches/chip_symmetry.hpp"
#include "batches/spatial_holdout.hpp"
#include "finetune/label_split.hpp"
#include "chips/store_writer.hpp"
#include "runs/checkpoint.hpp"
#include "runs/model_archive.hpp"
#include "temp_folder.hpp"

using tinct::testing::TempFolder;

namespace {

// A pairs store of `count` 4x4 chips with 2 bands: band b of chip c holds 100c + 10b + pixel;
// chip c lies in block "c/2" (two chips per block). Pixel 15 of each chip is invalid.
std::filesystem::path write_small_store(const std::filesystem::path& path, int count) {
  tinct::StoreLayout layout;
  layout.chip_size = 4;
  layout.bands = {{"nir", tinct::StorageType::uint16, 0.001, 0}, {"swir", tinct::StorageType::uint16, 0.001, 0}};
  tinct::StoreWriter writer(path, layout, false);
  for (int c = 0; c < count; ++c) {
    std::vector<std::uint16_t> bands(2 * 16);
    for (int b = 0; b < 2; ++b)
      for (int p = 0; p < 16; ++p) bands[b * 16 + p] = static_cast<std::uint16_t>(100 * c + 10 * b + p);
    std::vector<std::uint8_t> colour(3 * 16, 128), valid(16, 1);
    valid[15] = 0;
    tinct::ChipRecord record;
    record.index = c;
    record.scene = "s";
    record.x = 100.0 * c;
    record.date = "2026-01-01";
    record.valid_fraction = 15.0 / 16;
    record.block = std::to_string(c / 2) + "_0";
    writer.add(record, bands.data(), colour.data(), valid.data());
  }
  tinct::StoreManifest header;
  header.pixel_size = 10;
  header.scenes = {{"s", "scene.tif", "2026-01-01", "LOCAL_CS[\"test\"]", {}}};
  writer.finish(header);
  return path;
}

}  // namespace

TEST_CASE("the eight chip symmetries are distinct and symmetry 1 turns a quarter clockwise") {
  std::vector<int> ramp(9);
  std::iota(ramp.begin(), ramp.end(), 0);  // 0 1 2 / 3 4 5 / 6 7 8
  std::set<std::vector<int>> seen;
  for (int s = 0; s < tinct::kSymmetries; ++s) {
    std::vector<int> out(9);
    tinct::apply_symmetry(s, ramp.data(), out.data(), 1, 3);
    seen.insert(out);
    if (s == 0) CHECK(out == ramp);
    if (s == 1) CHECK(out == std::vector<int>{6, 3, 0, 7, 4, 1, 8, 5, 2});  // clockwise quarter turn
    if (s == 4) CHECK(out == std::vector<int>{2, 1, 0, 5, 4, 3, 8, 7, 6});  // left-right flip
  }
  CHECK(seen.size() == 8);
}

TEST_CASE("batch order: each epoch visits every chip once and is reproducible") {
  const tinct::BatchOrder a(10, 5, 3), b(10, 5, 3), c(10, 5, 4);
  std::multiset<std::int64_t> epoch;
  for (int step = 0; step < 2; ++step) {
    for (auto i : a.batch(step)) epoch.insert(i);
  }
  CHECK(epoch.size() == 10);
  CHECK(std::set<std::int64_t>(epoch.begin(), epoch.end()).size() == 10);
  CHECK(a.batch(7) == b.batch(7));
  CHECK(a.batch(7) != c.batch(7));
  CHECK(a.epoch_of(3) == 1);
}

TEST_CASE("batches normalise reflectance with the stores' statistics and zero invalid pixels") {
  TempFolder folder;
  const tinct::ChipCollection chips({write_small_store(folder / "a.pairs", 6)});
  const auto& norm = chips.normalisation();
  REQUIRE(norm.bands == std::vector<std::string>{"nir", "swir"});
  const tinct::Batch batch = tinct::assemble_batch(chips, {{0, 2}}, {0});
  REQUIRE(batch.bands.sizes() == torch::IntArrayRef({1, 2, 4, 4}));
  // Chip 2, band 1, pixel 3: stored 100*2 + 10 + 3 = 213 -> reflectance 0.213.
  const double expected = (0.213 - norm.mean[1]) / norm.std[1];
  CHECK(batch.bands[0][1][0][3].item<float>() == Approx(expected).epsilon(1e-5));
  CHECK(batch.bands[0][0][3][3].item<float>() == 0.0f);  // pixel 15 is invalid
  CHECK_FALSE(batch.valid[0][3][3].item<bool>());
  CHECK(batch.colour.sizes() == torch::IntArrayRef({1, 3, 4, 4}));
}

TEST_CASE("the loader's batches equal those built directly, step by step") {
  TempFolder folder;
  const tinct::ChipCollection chips({write_small_store(folder / "a.pairs", 9)});
  const auto refs = chips.all();
  tinct::LoaderSettings settings;
  settings.batch_size = 4;
  settings.seed = 8;
  settings.first_step = 3;
  tinct::BatchLoader loader(chips, refs, settings);
  for (int step = 3; step < 8; ++step) {
    const tinct::Batch from_thread = loader.next();
    const tinct::Batch direct = loader.build(step);
    CHECK(from_thread.step == step);
    CHECK(torch::equal(from_thread.bands, direct.bands));
  }
}

TEST_CASE("held-out blocks never share a block with training chips") {
  TempFolder folder;
  const tinct::ChipCollection chips({write_small_store(folder / "a.pairs", 10)});
  const auto split = tinct::hold_out_blocks(chips, 0.2, 1);
  CHECK(split.validation_blocks == 1);
  CHECK(split.train.size() + split.validation.size() == 10);
  std::set<std::string> train_blocks;
  for (const auto& ref : split.train) train_blocks.insert(chips.block_of(ref));
  for (const auto& ref : split.validation) CHECK(train_blocks.count(chips.block_of(ref)) == 0);
}

TEST_CASE("a checkpoint killed mid-write leaves the previous one loadable") {
  TempFolder folder;
  torch::manual_seed(0);
  torch::nn::Linear model(64, 32);
  torch::optim::SGD optimizer(model->parameters(), 0.1);
  const auto first = tinct::checkpoint_path(folder.path(), 1);
  tinct::save_checkpoint(first, *model, optimizer, {1, "spec", "hash", {}});
  {
    torch::NoGradGuard no_grad;
    model->weight.add_(1.0);  // the child saves these changed weights over the same name
  }
  const auto has_temporary = [&] {
    for (const auto& entry : std::filesystem::directory_iterator(folder.path())) {
      if (entry.path().filename().string().rfind(".step-", 0) == 0) return true;
    }
    return false;
  };
  // The child kills itself at the point under test: the new checkpoint is written in full
  // to its temporary name and not yet renamed over the old one.
  const pid_t child = ::fork();
  if (child == 0) {
    tinct::set_archive_save_hook([](const std::filesystem::path&) { ::kill(::getpid(), SIGKILL); });
    tinct::save_checkpoint(first, *model, optimizer, {2, "spec", "hash", {}});
    ::_exit(0);
  }
  int status = 0;
  ::waitpid(child, &status, 0);
  const bool killed_mid_write = WIFSIGNALED(status) && WTERMSIG(status) == SIGKILL && has_temporary();
  REQUIRE(killed_mid_write);
  torch::nn::Linear loaded(64, 32);
  torch::optim::SGD loaded_optimizer(loaded->parameters(), 0.1);
  const auto info = tinct::load_checkpoint(first, *loaded, loaded_optimizer);
  CHECK(info.step == 1);
  CHECK(tinct::latest_checkpoint(folder.path()) == first);
}

namespace {

// A label store of chips on a 10 x 10 grid of points 100 m apart; class = column parity.
std::filesystem::path write_label_store(const std::filesystem::path& path, int side) {
  tinct::StoreLayout layout;
  layout.kind = tinct::StoreKind::labels;
  layout.chip_size = 4;
  layout.has_colour = false;
  layout.bands = {{"nir", tinct::StorageType::uint16, 0.001, 0}};
  tinct::StoreWriter writer(path, layout, false);
  std::vector<std::uint16_t> bands(16, 100);
  std::vector<std::uint8_t> valid(16, 1);
  for (int i = 0; i < side * side; ++i) {
    tinct::ChipRecord record;
    record.index = i;
    record.scene = "s";
    record.x = 100.0 * (i % side);
    record.y = 100.0 * (i / side);
    record.date = "2026-01-01";
    record.valid_fraction = 1;
    record.block = "0_0";
    record.label = (i % side) % 2 ? "wet" : "dry";
    record.group = "g" + std::to_string(i / 3);
    record.source_id = "site" + std::to_string(i);
    writer.add(record, bands.data(), nullptr, valid.data());
  }
  tinct::StoreManifest header;
  header.kind = tinct::StoreKind::labels;
  header.pixel_size = 10;
  header.classes = {"dry", "wet"};
  header.scenes = {{"s", "scene.tif", "2026-01-01", "LOCAL_CS[\"test\"]", {}}};
  writer.finish(header);
  return path;
}

}  // namespace

TEST_CASE("spatial folds partition the labels and the buffer keeps training chips away from test chips") {
  TempFolder folder;
  const tinct::ChipCollection chips({write_label_store(folder / "l.labels", 10)});
  tinct::SplitSettings settings;
  settings.block_size = 250;  // 4 x 4 blocks over the 1 km square
  settings.folds = 4;
  settings.buffer = 150;
  std::multiset<std::int64_t> tested;
  for (int fold = 0; fold < 4; ++fold) {
    settings.fold = fold;
    const tinct::LabelSplit split = tinct::split_labels(chips, settings);
    for (const auto& ref : split.test) tested.insert(ref.chip);
    for (const auto& train : split.train) {
      const auto t = chips.store(0).record(train.chip);
      for (const auto& test : split.test) {
        const auto s = chips.store(0).record(test.chip);
        CHECK(std::hypot(t.x - s.x, t.y - s.y) >= 150);
        CHECK(tinct::split_unit(chips, train, settings) != tinct::split_unit(chips, test, settings));
      }
    }
    CHECK(split.dropped_by_buffer > 0);
  }
  // Every chip is tested exactly once over the four folds.
  CHECK(tested.size() == 100);
  CHECK(std::set<std::int64_t>(tested.begin(), tested.end()).size() == 100);
}

TEST_CASE("group folds keep a group on one side, and too few chips per class is refused") {
  TempFolder folder;
  const tinct::ChipCollection chips({write_label_store(folder / "l.labels", 4)});
  tinct::SplitSettings settings;
  settings.method = tinct::SplitMethod::groups;
  settings.folds = 3;
  const tinct::LabelSplit split = tinct::split_labels(chips, settings);
  std::set<std::string> test_groups;
  for (const auto& ref : split.test) test_groups.insert(chips.store(0).record(ref.chip).group);
  for (const auto& ref : split.train) CHECK(test_groups.count(chips.store(0).record(ref.chip).group) == 0);
  settings.folds = 9;  // 8 chips per class
  CHECK_THROWS_WITH(tinct::split_labels(chips, settings), Catch::Matchers::Contains("fewer than the 9 folds"));
}
