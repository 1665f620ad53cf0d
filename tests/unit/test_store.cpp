#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <cstring>
#include <fstream>
#include <cstdio>
#include <functional>
#include <random>
#include <vector>

#include "chips/band_statistics.hpp"
#include "chips/buffered_file.hpp"
#include "chips/chip_record.hpp"
#include "chips/mapped_file.hpp"
#include "chips/store_manifest.hpp"
#include "chips/store_reader.hpp"
#include "chips/store_writer.hpp"
#include "temp_folder.hpp"
#include "util/csv_field.hpp"
#include "util/error.hpp"

namespace fs = std::filesystem;
using Catch::Matchers::Contains;
using Catch::Matchers::WithinAbs;
using tinct::testing::TempFolder;
using tinct::testing::read_text;

namespace {

// One chip's pixels as the writer takes them.
struct Chip {
  tinct::ChipRecord record;
  std::vector<std::uint16_t> u16;
  std::vector<float> f32;
  std::vector<std::uint8_t> colour;
  std::vector<std::uint8_t> valid;
  const void* bands() const { return u16.empty() ? static_cast<const void*>(f32.data()) : u16.data(); }
};

tinct::StoreLayout layout(tinct::StorageType storage, int size = 8,
                          tinct::StoreKind kind = tinct::StoreKind::pairs, bool colour = true) {
  tinct::StoreLayout result;
  result.kind = kind;
  result.chip_size = size;
  result.has_colour = colour;
  result.storage = storage;
  const bool integer = storage == tinct::StorageType::uint16;
  for (const char* name : {"B02", "B03", "B04", "B08"}) {
    result.bands.push_back({name, storage, integer ? 0.0001 : 0.5, integer ? -1000.0 : 0.25});
  }
  return result;
}

// Pseudo-random pixels with repeated values (so percentiles meet ties) and about
// one pixel in five invalid; invalid pixels hold extreme values that would show
// up in any statistic that counted them.
std::vector<Chip> make_chips(const tinct::StoreLayout& layout, int count, unsigned seed) {
  std::mt19937 random(seed);
  std::uniform_int_distribution<int> stored(1000, 1400);
  std::uniform_real_distribution<float> real(-2.0f, 3.0f);
  std::uniform_int_distribution<int> byte(0, 255);
  const std::size_t area = static_cast<std::size_t>(layout.chip_size) * layout.chip_size;
  const std::size_t values = area * layout.bands.size();
  std::vector<Chip> chips(count);
  for (int i = 0; i < count; ++i) {
    Chip& chip = chips[i];
    chip.record.index = i;
    chip.record.scene = i % 2 == 0 ? "s1" : "s2";
    chip.record.col = 8 * i;
    chip.record.row = 3 * i + 1;
    chip.record.x = 500000.123456789 + 80.1 * i;
    chip.record.y = 4649999.987654321 - 0.1 * i;
    chip.record.date = "2023-06-1" + std::to_string(i % 10);
    chip.record.block = "b" + std::to_string(i / 2);
    chip.valid.resize(area);
    for (auto& v : chip.valid) v = byte(random) < 51 ? 0 : 1;
    chip.record.valid_fraction =
        static_cast<double>(std::count(chip.valid.begin(), chip.valid.end(), 1)) / area;
    for (std::size_t p = 0; p < values; ++p) {
      const bool valid = chip.valid[p % area] != 0;
      if (layout.storage == tinct::StorageType::uint16) {
        chip.u16.push_back(valid ? static_cast<std::uint16_t>(stored(random)) : 65535);
      } else {
        chip.f32.push_back(valid ? real(random) : (p % 2 ? 1e30f : std::nanf("")));
      }
    }
    if (layout.has_colour) {
      chip.colour.resize(3 * area);
      for (auto& c : chip.colour) c = static_cast<std::uint8_t>(byte(random));
    }
  }
  return chips;
}

tinct::StoreManifest header_fields() {
  tinct::StoreManifest header;
  header.pixel_size = 10;
  header.config_hash = "0123abcd";
  header.tinct_version = "test-version";
  header.scenes.push_back({"s1", "/data/s1.tif", "2023-06-10", "WKT A", {{"colour_shift_dx_px", "0.25"}}});
  header.scenes.push_back({"s2", "/data/s2, \"copy\".tif", "2023-06-11", "WKT A", {{"note", "null"}}});
  return header;
}

fs::path write_store(const fs::path& target, const tinct::StoreLayout& layout, const std::vector<Chip>& chips,
                     tinct::StoreManifest header = header_fields()) {
  tinct::StoreWriter writer(target, layout, false);
  for (const Chip& chip : chips) {
    writer.add(chip.record, chip.bands(), chip.colour.empty() ? nullptr : chip.colour.data(), chip.valid.data());
  }
  writer.finish(header);
  return target;
}

void check_records_equal(const tinct::ChipRecord& a, const tinct::ChipRecord& b) {
  CHECK(a.index == b.index);
  CHECK(a.scene == b.scene);
  CHECK(a.col == b.col);
  CHECK(a.row == b.row);
  CHECK(a.x == b.x);
  CHECK(a.y == b.y);
  CHECK(a.date == b.date);
  CHECK(a.valid_fraction == b.valid_fraction);
  CHECK(a.block == b.block);
  CHECK(a.label == b.label);
  CHECK(a.group == b.group);
  CHECK(a.source_id == b.source_id);
}

// numpy.percentile(values, percent), default method "linear" (numpy 1.24
// lib/function_base.py: virtual index (n-1)q, then _lerp), computed by sorting.
double numpy_percentile(std::vector<double> values, double percent) {
  std::sort(values.begin(), values.end());
  const double h = static_cast<double>(values.size() - 1) * (percent / 100.0);
  const std::size_t below = static_cast<std::size_t>(std::floor(h));
  const std::size_t above = std::min(below + 1, values.size() - 1);
  const double gamma = h - std::floor(h);
  const double a = values[below], b = values[above];
  return gamma >= 0.5 ? b - (b - a) * (1 - gamma) : a + (b - a) * gamma;
}

// The reflectances of one band's valid pixels over all chips, as the test reads them.
std::vector<double> valid_reflectances(const std::vector<Chip>& chips, const tinct::StoreLayout& layout,
                                       std::size_t band) {
  const std::size_t area = static_cast<std::size_t>(layout.chip_size) * layout.chip_size;
  const tinct::StoreBand& info = layout.bands[band];
  std::vector<double> values;
  for (const Chip& chip : chips) {
    for (std::size_t p = 0; p < area; ++p) {
      if (!chip.valid[p]) continue;
      const double stored = chip.u16.empty() ? chip.f32[band * area + p] : chip.u16[band * area + p];
      values.push_back((stored + info.offset) * info.scale);
    }
  }
  return values;
}

void check_statistics(const std::vector<Chip>& chips, const tinct::StoreLayout& layout,
                      const tinct::StoreManifest& manifest, double percentile_tolerance) {
  REQUIRE(manifest.statistics.size() == layout.bands.size());
  for (std::size_t band = 0; band < layout.bands.size(); ++band) {
    const std::vector<double> values = valid_reflectances(chips, layout, band);
    double sum = 0;
    for (double v : values) sum += v;
    const double mean = sum / values.size();
    double squares = 0;
    for (double v : values) squares += (v - mean) * (v - mean);
    const tinct::BandStatistics& stats = manifest.statistics[band];
    CHECK(stats.count == static_cast<std::int64_t>(values.size()));
    CHECK_THAT(stats.mean, WithinAbs(mean, 1e-12));
    CHECK_THAT(stats.std, WithinAbs(std::sqrt(squares / values.size()), 1e-12));
    if (percentile_tolerance == 0) {
      CHECK(stats.p02 == numpy_percentile(values, 2));
      CHECK(stats.p98 == numpy_percentile(values, 98));
    } else {
      CHECK_THAT(stats.p02, WithinAbs(numpy_percentile(values, 2), percentile_tolerance));
      CHECK_THAT(stats.p98, WithinAbs(numpy_percentile(values, 98), percentile_tolerance));
    }
  }
}

std::string error_of(const std::function<void()>& action) {
  try {
    action();
  } catch (const tinct::Error& e) {
    return e.what();
  }
  return "(no error)";
}

void replace_in_file(const fs::path& file, const std::string& from, const std::string& to) {
  std::string text = read_text(file);
  const auto at = text.find(from);
  REQUIRE(at != std::string::npos);
  text.replace(at, from.size(), to);
  std::ofstream(file, std::ios::binary | std::ios::trunc) << text;
}

}  // namespace

TEST_CASE("a uint16 store reads back exactly what was written", "[store]") {
  TempFolder folder;
  const auto shape = layout(tinct::StorageType::uint16);
  const auto chips = make_chips(shape, 3, 1);
  const auto store = tinct::StoreReader::open(write_store(folder / "store", shape, chips));
  CHECK_FALSE(fs::exists(folder / "store.partial"));
  REQUIRE(store.chip_count() == 3);
  CHECK(store.chip_size() == 8);
  CHECK(store.band_count() == 4);
  const std::size_t area = 64;
  std::vector<float> reflectance(4 * area);
  for (int i = 0; i < 3; ++i) {
    CHECK(std::memcmp(store.bands_u16(i), chips[i].u16.data(), 4 * area * 2) == 0);
    CHECK(std::memcmp(store.colour(i), chips[i].colour.data(), 3 * area) == 0);
    CHECK(std::memcmp(store.valid(i), chips[i].valid.data(), area) == 0);
    check_records_equal(store.record(i), chips[i].record);
    store.read_reflectance(i, reflectance.data());
    for (std::size_t p = 0; p < 4 * area; ++p) {
      const auto& band = shape.bands[p / area];
      const auto expected = static_cast<float>((chips[i].u16[p] + band.offset) * band.scale);
      if (reflectance[p] != expected) FAIL("reflectance differs at chip " << i << " value " << p);
    }
  }
  const tinct::StoreManifest& manifest = store.manifest();
  CHECK(manifest.format_version == 1);
  CHECK(manifest.kind == tinct::StoreKind::pairs);
  CHECK(manifest.colour_encoding == tinct::ColourEncoding::cielab8);
  CHECK(manifest.bands[3].name == "B08");
  CHECK(manifest.bands[3].scale == 0.0001);
  CHECK(manifest.bands[3].offset == -1000);
  CHECK(manifest.crs == "WKT A");  // both scenes agree
  CHECK(manifest.pixel_size == 10);
  CHECK(manifest.config_hash == "0123abcd");
  CHECK(manifest.tinct_version == "test-version");
  REQUIRE(manifest.scenes.size() == 2);
  CHECK(manifest.scenes[1].path == "/data/s2, \"copy\".tif");
  CHECK(manifest.scenes[0].notes.at("colour_shift_dx_px") == "0.25");
  CHECK(manifest.scenes[1].notes.at("note") == "null");
  CHECK_THROWS_WITH(store.bands_f32(0), Contains("holds uint16 bands"));
}

TEST_CASE("a float32 store reads back exactly what was written", "[store]") {
  TempFolder folder;
  const auto shape = layout(tinct::StorageType::float32);
  const auto chips = make_chips(shape, 3, 2);
  const auto store = tinct::StoreReader::open(write_store(folder / "store", shape, chips));
  const std::size_t area = 64;
  std::vector<float> reflectance(4 * area);
  for (int i = 0; i < 3; ++i) {
    CHECK(std::memcmp(store.bands_f32(i), chips[i].f32.data(), 4 * area * 4) == 0);
    CHECK(std::memcmp(store.valid(i), chips[i].valid.data(), area) == 0);
    store.read_reflectance(i, reflectance.data());
    const auto& band = shape.bands[2];
    const float stored = chips[i].f32[2 * area + 5];
    CHECK(reflectance[2 * area + 5] == static_cast<float>((stored + band.offset) * band.scale));
  }
  CHECK(store.manifest().bands[0].storage == tinct::StorageType::float32);
  CHECK_THROWS_WITH(store.bands_u16(0), Contains("holds float32 bands"));
}

TEST_CASE("uint16 statistics equal a direct computation over the valid pixels", "[store]") {
  TempFolder folder;
  const auto shape = layout(tinct::StorageType::uint16, 16);
  const auto chips = make_chips(shape, 7, 3);
  const auto store = tinct::StoreReader::open(write_store(folder / "store", shape, chips));
  check_statistics(chips, shape, store.manifest(), 0);  // percentiles exact
}

TEST_CASE("float32 statistics equal a direct computation, percentiles to a bin width", "[store]") {
  TempFolder folder;
  const auto shape = layout(tinct::StorageType::float32, 16);
  const auto chips = make_chips(shape, 7, 4);
  const auto store = tinct::StoreReader::open(write_store(folder / "store", shape, chips));
  // Values span (-2 + 0.25) * 0.5 .. (3 + 0.25) * 0.5, so a bin is 2.5 / 65536 wide.
  check_statistics(chips, shape, store.manifest(), 2.5 / 65536);
}

TEST_CASE("invalid pixels are left out of the statistics", "[store]") {
  TempFolder folder;
  const auto shape = layout(tinct::StorageType::uint16);
  auto chips = make_chips(shape, 2, 5);
  for (auto& chip : chips) {
    std::fill(chip.valid.begin(), chip.valid.end(), 0);
    std::fill(chip.u16.begin(), chip.u16.end(), 60000);
  }
  chips[1].valid[10] = 1;
  for (int band = 0; band < 4; ++band) chips[1].u16[band * 64 + 10] = static_cast<std::uint16_t>(2000 + band);
  const auto store = tinct::StoreReader::open(write_store(folder / "store", shape, chips));
  for (int band = 0; band < 4; ++band) {
    const tinct::BandStatistics& stats = store.manifest().statistics[band];
    const double only = (2000 + band - 1000) * 0.0001;
    CHECK(stats.count == 1);
    CHECK(stats.mean == only);
    CHECK(stats.std == 0);
    CHECK(stats.p02 == only);
    CHECK(stats.p98 == only);
  }
}

TEST_CASE("a store without any valid pixel is refused", "[store]") {
  TempFolder folder;
  const auto shape = layout(tinct::StorageType::uint16);
  auto chips = make_chips(shape, 1, 6);
  std::fill(chips[0].valid.begin(), chips[0].valid.end(), 0);
  CHECK_THAT(error_of([&] { write_store(folder / "store", shape, chips); }), Contains("no chip has a valid pixel"));
  CHECK(fs::is_empty(folder.path()));
}

TEST_CASE("a non-finite value at a valid float32 pixel is refused", "[store]") {
  TempFolder folder;
  const auto shape = layout(tinct::StorageType::float32);
  auto chips = make_chips(shape, 2, 17);
  chips[1].valid[3] = 1;
  chips[1].f32[2 * 64 + 3] = std::nanf("");
  CHECK_THAT(error_of([&] { write_store(folder / "store", shape, chips); }),
             Contains("chip 1, band B04: a valid pixel holds a non-finite value"));
  CHECK(fs::is_empty(folder.path()));
}

TEST_CASE("a truncated bands.bin is reported with the sizes and a fix", "[store]") {
  TempFolder folder;
  const auto shape = layout(tinct::StorageType::uint16);
  const auto store = write_store(folder / "store", shape, make_chips(shape, 3, 7));
  fs::resize_file(store / "bands.bin", 1200);
  CHECK_THAT(error_of([&] { tinct::StoreReader::open(store); }),
             Contains("bands.bin is 1200 bytes but the manifest's 3 chips x 4 bands x 8 x 8 x 2 bytes "
                      "need 1536; the store is truncated or was edited: rebuild it with tinct pair"));
}

TEST_CASE("a flipped byte in any data file fails naming it, against the manifest's SHA-256", "[store]") {
  TempFolder folder;
  const auto shape = layout(tinct::StorageType::uint16);
  for (const char* name : {"bands.bin", "colour.bin", "valid.bin"}) {
    const auto store = write_store(folder / name, shape, make_chips(shape, 3, 9));
    CHECK_NOTHROW(tinct::StoreReader::open(store));
    std::string bytes = tinct::testing::read_text(store / name);
    bytes[bytes.size() / 2] = static_cast<char>(bytes[bytes.size() / 2] ^ 0x01);
    folder.write(std::string(name) + "/" + name, bytes);
    const std::string message = error_of([&] { tinct::StoreReader::open(store); });
    INFO(message);
    CHECK_THAT(message, Contains((store / name).string() + " is damaged: its SHA-256 is"));
    CHECK_THAT(message, Contains("recorded in manifest.yaml"));
  }
}

TEST_CASE("an edited chip_count or chips.csv disagrees with the files", "[store]") {
  TempFolder folder;
  const auto shape = layout(tinct::StorageType::uint16);
  const auto store = write_store(folder / "store", shape, make_chips(shape, 3, 8));
  SECTION("chip_count") {
    replace_in_file(store / "manifest.yaml", "chip_count: 3", "chip_count: 2");
    CHECK_THAT(error_of([&] { tinct::StoreReader::open(store); }),
               Contains("bands.bin is 1536 bytes but the manifest's 2 chips x 4 bands x 8 x 8 x 2 bytes need 1024"));
  }
  SECTION("a row removed from chips.csv") {
    std::string text = read_text(store / "chips.csv");
    text.erase(text.rfind('\n', text.size() - 2) + 1);
    std::ofstream(store / "chips.csv", std::ios::trunc) << text;
    CHECK_THAT(error_of([&] { tinct::StoreReader::open(store); }),
               Contains("chips.csv has 2 rows but the manifest's chip_count is 3; the store is truncated"));
  }
  SECTION("a bad number in chips.csv names the line") {
    replace_in_file(store / "chips.csv", "\n1,s2,8,", "\n1,s2,eight,");
    CHECK_THAT(error_of([&] { tinct::StoreReader::open(store); }),
               Contains("chips.csv line 3: column col holds \"eight\", not a number"));
  }
}

TEST_CASE("a store of a newer format asks for a newer tinct", "[store]") {
  TempFolder folder;
  const auto shape = layout(tinct::StorageType::uint16);
  const auto store = write_store(folder / "store", shape, make_chips(shape, 1, 9));
  replace_in_file(store / "manifest.yaml", "format_version: 1", "format_version: 2");
  const std::string message = error_of([&] { tinct::StoreReader::open(store); });
  CHECK_THAT(message, Contains("format_version 2, newer than this tinct reads (up to 1); upgrade tinct"));
  CHECK_THAT(message, Contains("manifest.yaml"));
}

TEST_CASE("a missing file or manifest key is named", "[store]") {
  TempFolder folder;
  const auto shape = layout(tinct::StorageType::uint16);
  const auto store = write_store(folder / "store", shape, make_chips(shape, 2, 10));
  SECTION("valid.bin") {
    fs::remove(store / "valid.bin");
    CHECK_THAT(error_of([&] { tinct::StoreReader::open(store); }),
               Contains("valid.bin is missing; the store is incomplete: rebuild it with tinct pair"));
  }
  SECTION("manifest.yaml") {
    fs::remove(store / "manifest.yaml");
    CHECK_THAT(error_of([&] { tinct::StoreReader::open(store); }), Contains("manifest.yaml is missing"));
  }
  SECTION("the store") {
    CHECK_THAT(error_of([&] { tinct::StoreReader::open(folder / "elsewhere"); }),
               Contains("store " + (folder / "elsewhere").string() + " not found"));
  }
  SECTION("a manifest key") {
    replace_in_file(store / "manifest.yaml", "pixel_size: 10\n", "");
    const std::string message = error_of([&] { tinct::StoreReader::open(store); });
    CHECK_THAT(message, Contains((store / "manifest.yaml").string() + ": pixel_size: required"));
    CHECK_THAT(message, Contains("rebuild the store"));
  }
  SECTION("a nested manifest key") {
    replace_in_file(store / "manifest.yaml", "    offset: -1000\n", "");
    CHECK_THAT(error_of([&] { tinct::StoreReader::open(store); }), Contains("bands[0].offset: required"));
  }
}

TEST_CASE("chip indexes are bounds-checked", "[store]") {
  TempFolder folder;
  const auto shape = layout(tinct::StorageType::uint16);
  const auto store = tinct::StoreReader::open(write_store(folder / "store", shape, make_chips(shape, 12, 11)));
  const std::string expected = "chip 17 is out of range: the store holds 12 chips";
  CHECK_THAT(error_of([&] { store.bands_u16(17); }), Contains(expected));
  CHECK_THAT(error_of([&] { store.record(17); }), Contains(expected));
  CHECK_THAT(error_of([&] { store.valid(17); }), Contains(expected));
  CHECK_THAT(error_of([&] { store.colour(17); }), Contains(expected));
  CHECK_THAT(error_of([&] { store.read_reflectance(17, nullptr); }), Contains(expected));
  CHECK_THAT(error_of([&] { store.valid(-1); }), Contains("chip -1 is out of range"));
  CHECK_NOTHROW(store.valid(11));
  CHECK_NOTHROW(store.prefetch(4, 8));
  CHECK_THAT(error_of([&] { store.prefetch(4, 9); }), Contains("chip 12 is out of range"));
}

TEST_CASE("a writer destroyed before finish leaves nothing behind", "[store]") {
  TempFolder folder;
  const auto shape = layout(tinct::StorageType::uint16);
  const auto chips = make_chips(shape, 2, 12);
  {
    tinct::StoreWriter writer(folder / "store", shape, false);
    writer.add(chips[0].record, chips[0].bands(), chips[0].colour.data(), chips[0].valid.data());
    CHECK(fs::exists(folder / "store.partial" / "bands.bin"));
  }
  CHECK(fs::is_empty(folder.path()));
  {
    tinct::StoreWriter writer(folder / "store", shape, false);
    CHECK_THAT(error_of([&] { writer.finish(header_fields()); }), Contains("no chips to write"));
  }
  CHECK(fs::is_empty(folder.path()));
}

TEST_CASE("colour added after its chips lands with them, in chip order", "[store]") {
  TempFolder folder;
  const auto shape = layout(tinct::StorageType::uint16);
  const auto chips = make_chips(shape, 4, 21);
  {
    tinct::StoreWriter writer(folder / "store", shape, false);
    writer.add(chips[0].record, chips[0].bands(), chips[0].colour.data(), chips[0].valid.data());
    writer.add_awaiting_colour(chips[1].record, chips[1].bands(), chips[1].valid.data());
    writer.add_awaiting_colour(chips[2].record, chips[2].bands(), chips[2].valid.data());
    CHECK(writer.chips_awaiting_colour() == 2);
    CHECK_THAT(error_of([&] { writer.add(chips[3].record, chips[3].bands(), chips[3].colour.data(),
                                         chips[3].valid.data()); }),
               Contains("2 earlier chips await their colour"));
  }
  tinct::StoreWriter writer(folder / "store", shape, false);
  writer.add(chips[0].record, chips[0].bands(), chips[0].colour.data(), chips[0].valid.data());
  writer.add_awaiting_colour(chips[1].record, chips[1].bands(), chips[1].valid.data());
  writer.add_awaiting_colour(chips[2].record, chips[2].bands(), chips[2].valid.data());
  CHECK_THAT(error_of([&] { writer.finish(header_fields()); }), Contains("2 chips still await their colour"));
  tinct::StoreWriter again(folder / "store2", shape, false);
  again.add(chips[0].record, chips[0].bands(), chips[0].colour.data(), chips[0].valid.data());
  again.add_awaiting_colour(chips[1].record, chips[1].bands(), chips[1].valid.data());
  again.add_awaiting_colour(chips[2].record, chips[2].bands(), chips[2].valid.data());
  again.add_colour(chips[1].colour.data());
  again.add_colour(chips[2].colour.data());
  CHECK_THAT(error_of([&] { again.add_colour(chips[3].colour.data()); }), Contains("without a chip awaiting"));
}

TEST_CASE("a store whose colour came after its chips reads back exactly", "[store]") {
  TempFolder folder;
  const auto shape = layout(tinct::StorageType::uint16);
  const auto chips = make_chips(shape, 3, 22);
  tinct::StoreWriter writer(folder / "store", shape, false);
  for (const Chip& chip : chips) writer.add_awaiting_colour(chip.record, chip.bands(), chip.valid.data());
  for (const Chip& chip : chips) writer.add_colour(chip.colour.data());
  writer.finish(header_fields());
  const auto store = tinct::StoreReader::open(folder / "store");
  REQUIRE(store.chip_count() == 3);
  for (int i = 0; i < 3; ++i) {
    CHECK(std::memcmp(store.bands_u16(i), chips[i].u16.data(), 4 * 64 * 2) == 0);
    CHECK(std::memcmp(store.colour(i), chips[i].colour.data(), 3 * 64) == 0);
    CHECK(std::memcmp(store.valid(i), chips[i].valid.data(), 64) == 0);
  }
}

TEST_CASE("an existing store is not replaced without replace", "[store]") {
  TempFolder folder;
  const auto shape = layout(tinct::StorageType::uint16);
  const auto store = write_store(folder / "store", shape, make_chips(shape, 2, 13));
  const std::string manifest = read_text(store / "manifest.yaml");
  const std::string bands = read_text(store / "bands.bin");
  try {
    tinct::StoreWriter writer(store, shape, false);
    FAIL("expected an error");
  } catch (const tinct::Error& e) {
    CHECK_THAT(e.what(), Contains("already exists"));
    CHECK(e.exit_code() == 2);
  }
  CHECK(read_text(store / "manifest.yaml") == manifest);
  CHECK(read_text(store / "bands.bin") == bands);
  CHECK(tinct::StoreReader::open(store).chip_count() == 2);

  const auto chips = make_chips(shape, 1, 14);
  tinct::StoreWriter writer(store, shape, true);
  writer.add(chips[0].record, chips[0].bands(), chips[0].colour.data(), chips[0].valid.data());
  writer.finish(header_fields());
  CHECK(tinct::StoreReader::open(store).chip_count() == 1);
}

TEST_CASE("chips.csv quotes commas, quotes and line breaks and reads them back", "[store]") {
  tinct::ChipRecord record;
  record.index = 0;
  record.scene = "scene, north";
  record.col = -3;
  record.row = 7;
  record.x = 0.1 + 0.2;
  record.y = -1.0 / 3.0;
  record.date = "2023-06-12";
  record.valid_fraction = 0.984375;
  record.block = "say \"hi\"";
  record.label = "reed, \"tall\"\nwet";
  record.group = "";
  record.source_id = "trap-7";
  std::string text;
  tinct::append_chip_row(text, record, true);
  CHECK(text ==
        "0,\"scene, north\",-3,7,0.30000000000000004,-0.3333333333333333,2023-06-12,0.984375,"
        "\"say \"\"hi\"\"\",\"reed, \"\"tall\"\"\nwet\",,trap-7\n");
  check_records_equal(tinct::parse_chip_row(text, true, "test"), record);

  // Through a label store, where the line break makes a row span two lines.
  TempFolder folder;
  auto shape = layout(tinct::StorageType::uint16, 8, tinct::StoreKind::labels, false);
  auto chips = make_chips(shape, 3, 15);
  for (auto& chip : chips) chip.record.label = "plain";
  chips[1].record.scene = record.scene;
  chips[1].record.label = record.label;
  chips[1].record.group = "g,1";
  auto header = header_fields();
  header.scenes[1].id = record.scene;
  header.scenes[1].crs = "WKT B";
  header.classes = {"plain", record.label};
  const auto store = tinct::StoreReader::open(write_store(folder / "store", shape, chips, header));
  CHECK_FALSE(store.has_colour());
  CHECK_FALSE(fs::exists(folder / "store" / "colour.bin"));
  CHECK(store.manifest().kind == tinct::StoreKind::labels);
  CHECK(store.manifest().classes == header.classes);
  CHECK(store.manifest().crs.empty());  // the scenes differ
  CHECK(store.manifest().scenes[1].crs == "WKT B");
  for (int i = 0; i < 3; ++i) check_records_equal(store.record(i), chips[i].record);
  CHECK_THROWS_WITH(store.colour(0), Contains("has no colour"));
}

TEST_CASE("a damaged chips.csv row says what is wrong with its quotes", "[store]") {
  // RFC 4180, section 2: a field with a quote is enclosed in quotes, its quotes doubled.
  const std::string ok = "0,s,1,2,3,4,2023-06-12,1,b\n";
  CHECK(tinct::parse_chip_row(ok, false, "row 2").scene == "s");
  CHECK_THROWS_WITH(tinct::parse_chip_row("0,s\"x,1,2,3,4,2023-06-12,1,b\n", false, "row 2"),
                    Contains("row 2: a quote inside an unquoted field") && Contains("rebuild the store"));
  CHECK_THROWS_WITH(tinct::parse_chip_row("0,\"s,1,2,3,4,2023-06-12,1,b\n", false, "row 2"),
                    Contains("row 2: a quoted field is not closed"));
  CHECK_THROWS_WITH(tinct::parse_chip_row("0,\"s\"x,1,2,3,4,2023-06-12,1,b\n", false, "row 2"),
                    Contains("row 2: text after a closing quote"));
  std::string problem;
  CHECK_FALSE(tinct::parse_csv_row("a,\"b", &problem).has_value());
  CHECK(problem == "a quoted field is not closed");
  CHECK(*tinct::parse_csv_row("a,\"b,\"\"c\"\"\",") == std::vector<std::string>{"a", "b,\"c\"", ""});
}

TEST_CASE("a label outside the classes is refused at finish", "[store]") {
  TempFolder folder;
  auto shape = layout(tinct::StorageType::uint16, 8, tinct::StoreKind::labels, false);
  auto chips = make_chips(shape, 1, 16);
  chips[0].record.label = "marsh";
  auto header = header_fields();
  header.classes = {"reed", "water"};
  CHECK_THAT(error_of([&] { write_store(folder / "store", shape, chips, header); }),
             Contains("chip label \"marsh\" is not among the classes (reed, water)"));
  CHECK(fs::is_empty(folder.path()));
}

TEST_CASE("the manifest text reads back field for field", "[store]") {
  TempFolder folder;
  tinct::StoreManifest manifest = header_fields();
  manifest.kind = tinct::StoreKind::labels;
  manifest.chip_size = 32;
  manifest.bands = layout(tinct::StorageType::float32).bands;
  manifest.colour_encoding = tinct::ColourEncoding::none;
  manifest.crs = "PROJCRS[\"WGS 84 / UTM zone 33N\",\n    ID[\"EPSG\",32633]]";
  manifest.pixel_size = 0.1;
  manifest.chip_count = 5;
  for (int band = 0; band < 4; ++band) manifest.statistics.push_back({100 + band, 0.1 * band, 1.0 / 3, -0.5, 2.75});
  manifest.classes = {"null", "~", "2023"};
  const auto file = folder.write("manifest.yaml", tinct::manifest_yaml(manifest));
  const tinct::StoreManifest read = tinct::read_manifest(file);
  CHECK(read.kind == manifest.kind);
  CHECK(read.chip_size == 32);
  CHECK(read.colour_encoding == tinct::ColourEncoding::none);
  CHECK(read.crs == manifest.crs);
  CHECK(read.pixel_size == 0.1);
  CHECK(read.chip_count == 5);
  CHECK(read.classes == manifest.classes);
  REQUIRE(read.statistics.size() == 4);
  CHECK(read.statistics[3].count == 103);
  CHECK(read.statistics[3].mean == manifest.statistics[3].mean);
  CHECK(read.statistics[3].std == 1.0 / 3);
  CHECK(read.bands[1].scale == 0.5);
  CHECK(read.bands[1].offset == 0.25);
  CHECK(read.scenes[1].path == manifest.scenes[1].path);
  CHECK(read.scenes[1].notes == manifest.scenes[1].notes);
}

TEST_CASE("a store file's SHA-256, hashed as it is written, equals sha256sum's", "[store]") {
  TempFolder folder;
  const fs::path file = folder / "written.bin";
  std::mt19937 random(7);
  std::uniform_int_distribution<int> byte(0, 255), size(1, 3000);
  {
    tinct::BufferedFile out(file, 1000);  // writes below, at and beyond the buffer, and empty ones
    for (int i = 0; i < 200; ++i) {
      std::vector<std::uint8_t> bytes(i % 50 == 0 ? 0 : static_cast<std::size_t>(size(random)));
      for (auto& b : bytes) b = static_cast<std::uint8_t>(byte(random));
      out.write(bytes.data(), bytes.size());
    }
    CHECK_THROWS_WITH(out.sha256(), Contains("only after close()"));
    out.close();
    // Outside reference: GNU coreutils' sha256sum of the file as it lies on disk.
    const std::string command = "sha256sum '" + file.string() + "'";
    FILE* pipe = ::popen(command.c_str(), "r");
    REQUIRE(pipe != nullptr);
    char text[65] = {};
    REQUIRE(std::fread(text, 1, 64, pipe) == 64);
    REQUIRE(::pclose(pipe) == 0);
    CHECK(out.sha256() == std::string(text));
  }
}

TEST_CASE("a uint16 store's statistics counted while writing equal a pass over its files", "[store]") {
  TempFolder folder;
  const auto shape = layout(tinct::StorageType::uint16, 16);
  const auto chips = make_chips(shape, 9, 11);
  const auto store = tinct::StoreReader::open(write_store(folder / "store", shape, chips));
  const auto bands = tinct::MappedFile::open(folder / "store" / "bands.bin", tinct::MapAccess::sequential);
  const auto valid = tinct::MappedFile::open(folder / "store" / "valid.bin", tinct::MapAccess::sequential);
  const auto from_files = tinct::band_statistics(shape, 9, bands.data(), valid.data());
  REQUIRE(from_files.size() == store.manifest().statistics.size());
  for (std::size_t band = 0; band < from_files.size(); ++band) {
    const tinct::BandStatistics& written = store.manifest().statistics[band];
    CHECK(written.count == from_files[band].count);
    CHECK(written.mean == from_files[band].mean);
    CHECK(written.std == from_files[band].std);
    CHECK(written.p02 == from_files[band].p02);
    CHECK(written.p98 == from_files[band].p98);
  }
}
