// Data-parallel training parts on real processes: the test binary launches itself as two
// local ranks on loopback (run_local_ranks), each running one hidden "rank:" test case on
// one thread with a short timeout. Checked: exact sums, broadcast, bucketed gradient
// averaging equal to one process with the whole batch, and a rank that dies or goes silent.
#include <torch/torch.h>
#undef CHECK
#include <catch2/catch.hpp>

#include <signal.h>

#include <chrono>
#include <map>
#include <thread>

#include "batches/batch_loader.hpp"
#include "chips/store_writer.hpp"
#include "distributed/global_mean_loss.hpp"
#include "distributed/gradient_averager.hpp"
#include "distributed/local_launcher.hpp"
#include "distributed/process_group.hpp"
#include "distributed/tensor_buckets.hpp"
#include "distributed/tensor_collectives.hpp"
#include "temp_folder.hpp"
#include "util/error.hpp"

using Catch::Matchers::Contains;
using Clock = std::chrono::steady_clock;

namespace {

constexpr int kTimeoutSeconds = 3;

// This process's place in the job its launcher started, with a short timeout.
std::unique_ptr<tinct::ProcessGroup> join_job() {
  torch::set_num_threads(1);
  tinct::DistributedSettings settings;
  settings.timeout_seconds = kTimeoutSeconds;
  const tinct::Rendezvous place = tinct::read_rendezvous(tinct::process_environment(), 0);
  REQUIRE(place.world >= 2);
  return std::make_unique<tinct::ProcessGroup>(place, settings);
}

// Runs the hidden test case `name` as two local ranks of this binary; rethrows the launcher's error.
void run_two_ranks(const std::string& name) {
  tinct::LocalLaunch launch;
  launch.world = 2;
  launch.arguments = {name};
  launch.grace_seconds = 2 * kTimeoutSeconds;
  tinct::run_local_ranks(launch);
}

double seconds_since(Clock::time_point start) {
  return std::chrono::duration<double>(Clock::now() - start).count();
}

}  // namespace

TEST_CASE("bucket plans keep list order, one type per bucket and a size limit") {
  const std::vector<at::Tensor> tensors{torch::zeros({10}), torch::zeros({10}), at::Tensor(), torch::zeros({30}),
                                        torch::zeros({5}, torch::kFloat64), torch::zeros({4}), torch::zeros({3})};
  const auto buckets = tinct::plan_buckets(tensors, 80);  // 20 floats
  REQUIRE(buckets.size() == 4);
  CHECK(buckets[0].members == std::vector<std::size_t>{0, 1});
  CHECK(buckets[0].elements == 20);
  CHECK(buckets[1].members == std::vector<std::size_t>{3});  // larger than a bucket: alone
  CHECK(buckets[2].members == std::vector<std::size_t>{4});  // float64 apart
  CHECK(buckets[3].members == std::vector<std::size_t>{5, 6});
  std::vector<at::Tensor> values{torch::arange(6).to(torch::kFloat32).view({2, 3}), torch::tensor({7.0f, 8.0f})};
  const auto whole = tinct::plan_buckets(values, 1 << 20);
  REQUIRE(whole.size() == 1);
  const at::Tensor flat = tinct::flatten_bucket(values, whole[0]);
  CHECK(torch::equal(flat, torch::tensor({0.0f, 1.0f, 2.0f, 3.0f, 4.0f, 5.0f, 7.0f, 8.0f})));
  tinct::unflatten_bucket(flat * 2, whole[0], values);
  CHECK(values[0][1][2].item<float>() == 10.0f);
  CHECK(values[1][1].item<float>() == 16.0f);
}

TEST_CASE("a single process opens nothing: collectives return at once and the hook is empty") {
  tinct::ProcessGroup group;
  CHECK(group.single());
  CHECK(group.is_writer());
  CHECK(group.any(true, "test"));
  std::vector<double> values{1.5, 2};
  group.sum(values, "test");
  CHECK(values == std::vector<double>{1.5, 2});
  group.barrier("test");
  CHECK_FALSE(tinct::make_gradient_sync(group, 1 << 20));
  const at::Tensor sum = torch::tensor(6.0, torch::requires_grad());
  CHECK(tinct::global_mean_loss(group, sum, 4).item<double>() == 1.5);
}

TEST_CASE("the training batch slices of two ranks make up the one-process batch") {
  tinct::testing::TempFolder folder;
  tinct::StoreLayout layout;
  layout.chip_size = 2;
  layout.bands = {{"nir", tinct::StorageType::uint16, 0.001, 0}};
  {
    tinct::StoreWriter writer(folder / "s.pairs", layout, false);
    for (int c = 0; c < 6; ++c) {
      std::vector<std::uint16_t> bands(4, static_cast<std::uint16_t>(100 + c));
      std::vector<std::uint8_t> colour(12, 128), valid(4, 1);
      tinct::ChipRecord record;
      record.index = c;
      record.scene = "s";
      record.date = "2026-01-01";
      record.valid_fraction = 1;
      record.block = "0_0";
      writer.add(record, bands.data(), colour.data(), valid.data());
    }
    tinct::StoreManifest header;
    header.pixel_size = 10;
    header.scenes = {{"s", "scene.tif", "2026-01-01", "LOCAL_CS[\"test\"]", {}}};
    writer.finish(header);
  }
  const tinct::ChipCollection chips({folder / "s.pairs"});
  tinct::LoaderSettings settings;
  settings.batch_size = 4;
  settings.seed = 7;
  tinct::BatchLoader whole(chips, chips.all(), settings);
  settings.world = 2;
  tinct::BatchLoader rank0(chips, chips.all(), settings);
  settings.rank = 1;
  tinct::BatchLoader rank1(chips, chips.all(), settings);
  for (std::int64_t step = 0; step < 5; ++step) {  // across epoch boundaries (6 chips, batch 4)
    const tinct::Batch a = rank0.build(step), b = rank1.build(step), one = whole.build(step);
    CHECK(a.bands.size(0) == 2);
    CHECK(torch::equal(torch::cat({a.bands, b.bands}), one.bands));
    CHECK(torch::equal(torch::cat({a.colour, b.colour}), one.colour));
  }
  settings.world = 3;
  CHECK_THROWS_WITH(tinct::BatchLoader(chips, chips.all(), settings), Contains("divisible by the number of processes"));
}

// ---- two ranks

TEST_CASE("rank: sums broadcast and barrier", "[.]") {
  auto group = join_job();
  const int rank = group->rank();
  std::vector<double> metrics{0.25 + rank, 1e15 + rank, static_cast<double>(10 * rank)};
  group->sum(metrics, "test metrics");
  CHECK(metrics == std::vector<double>{1.5, 2e15 + 1, 10});  // exact: values representable in double
  at::Tensor counts = torch::arange(5, torch::kInt64) + rank * 100;  // 0..4 and 100..104
  group->sum(counts, "test counts");
  CHECK(torch::equal(counts, torch::tensor({100, 102, 104, 106, 108}, torch::kInt64)));
  at::Tensor floats = torch::full({3, 4}, 0.5f * static_cast<float>(rank + 1));
  group->sum(floats, "test floats");
  CHECK(torch::equal(floats, torch::full({3, 4}, 1.5f)));
  CHECK(group->any(rank == 1, "test stop request"));
  CHECK_FALSE(group->any(false, "test stop request"));

  // Rank-dependent initial weights become rank 0's everywhere; average of buffers.
  torch::manual_seed(static_cast<std::uint64_t>(rank));
  torch::nn::Conv2d conv(torch::nn::Conv2dOptions(2, 3, 3));
  torch::nn::BatchNorm2d norm(3);
  norm->running_mean.fill_(static_cast<double>(rank));
  std::vector<at::Tensor> state = conv->parameters();
  for (const auto& buffer : norm->buffers()) state.push_back(buffer);
  std::vector<double> checksum{conv->weight.sum().item<double>()};
  tinct::broadcast_tensors(*group, state, 64);
  const double mine = conv->weight.sum().item<double>();
  checksum = {mine};
  group->sum(checksum, "test checksum");
  CHECK(checksum[0] == 2 * mine);  // identical weights on both ranks
  tinct::average_tensors(*group, {norm->running_mean}, 64);
  CHECK(norm->running_mean[0].item<float>() == 0.0f);  // broadcast made it rank 0's (0) first
  norm->running_mean.fill_(static_cast<double>(rank));
  norm->num_batches_tracked.fill_(3 + rank);
  tinct::average_tensors(*group, {norm->running_mean, norm->num_batches_tracked}, 64);
  CHECK(norm->running_mean[2].item<float>() == 0.5f);
  CHECK(norm->num_batches_tracked.item<std::int64_t>() == 3 + rank);  // counters stay
  group->barrier("test barrier");
}

TEST_CASE("two local ranks sum known values exactly, broadcast rank 0's tensors and meet at a barrier") {
  CHECK_NOTHROW(run_two_ranks("rank: sums broadcast and barrier"));
}

namespace {

// A per-pixel model without batch norm: conv, ReLU, 1x1 conv to 3 channels. Besides, a
// parameter only chips flagged special reach, a frozen one and one no chip reaches.
struct TinyNet : torch::nn::Module {
  TinyNet()
      : first(register_module("first", torch::nn::Conv2d(torch::nn::Conv2dOptions(2, 4, 3).padding(1)))),
        second(register_module("second", torch::nn::Conv2d(torch::nn::Conv2dOptions(4, 3, 1)))),
        special(register_parameter("special", torch::ones({3}))),
        frozen(register_parameter("frozen", torch::ones({2}), /*requires_grad=*/false)),
        unused(register_parameter("unused", torch::ones({5}))) {}
  torch::nn::Conv2d first, second;
  torch::Tensor special, frozen, unused;
};

// Summed loss over valid pixels (squared error, channel-weighted by `frozen`), plus a term
// for special chips; and the valid pixel count, the denominator of the mean.
std::pair<torch::Tensor, double> summed_loss(TinyNet& net, const torch::Tensor& bands, const torch::Tensor& target,
                                             const torch::Tensor& valid, const std::vector<bool>& special) {
  const torch::Tensor out = net.second(torch::relu(net.first(bands)));  // (B, 3, H, W)
  const torch::Tensor error = (out - target).pow(2).sum(1) * net.frozen[0];  // (B, H, W)
  torch::Tensor sum = (error * valid).sum();
  for (std::size_t i = 0; i < special.size(); ++i) {
    if (special[i]) sum = sum + (out[static_cast<long>(i)].mean({1, 2}) * net.special).sum();
  }
  return {sum, valid.sum().item<double>()};
}

std::map<std::string, torch::Tensor> gradients_of(TinyNet& net) {
  std::map<std::string, torch::Tensor> grads;
  for (const auto& item : net.named_parameters()) {
    grads[item.key()] = item.value().grad().defined() ? item.value().grad().clone() : torch::Tensor();
  }
  return grads;
}

}  // namespace

TEST_CASE("rank: gradients of half batches", "[.]") {
  auto group = join_job();
  const int rank = group->rank();
  // Global batch B = 8 of 2-band 5x5 chips; the valid pixels differ per chip, so the halves
  // hold different counts and a mean of per-rank means would be wrong. Chip 1 (rank 0's) is special.
  torch::manual_seed(11);
  const int batch = 8;
  const torch::Tensor bands = torch::randn({batch, 2, 5, 5});
  const torch::Tensor target = torch::randn({batch, 3, 5, 5});
  const torch::Tensor valid = (torch::rand({batch, 5, 5}) < torch::linspace(0.2, 1.0, batch).view({batch, 1, 1}))
                                  .to(torch::kFloat32);
  std::vector<bool> special(batch, false);
  special[1] = true;
  TinyNet net;  // seeded above: the same initial weights on both ranks

  // One process with the whole batch.
  auto [whole_sum, whole_count] = summed_loss(net, bands, target, valid, special);
  (whole_sum / whole_count).backward();
  const std::map<std::string, torch::Tensor> expected = gradients_of(net);
  for (auto& parameter : net.parameters()) parameter.mutable_grad() = torch::Tensor();

  // This rank's half, its share of the global mean, then the bucketed average (buckets of
  // 16 floats: the 72-float conv weight alone, the rest in several buckets).
  const long half = batch / 2, begin = rank * half;
  const std::vector<bool> my_special(special.begin() + begin, special.begin() + begin + half);
  auto [local_sum, local_count] = summed_loss(net, bands.narrow(0, begin, half), target.narrow(0, begin, half),
                                              valid.narrow(0, begin, half), my_special);
  tinct::global_mean_loss(*group, local_sum, local_count).backward();
  CHECK(net.special.grad().defined() == (rank == 0));  // before: only rank 0 reached it
  const auto sync = tinct::make_gradient_sync(*group, 64);
  REQUIRE(sync);
  sync(net.parameters());
  const std::map<std::string, torch::Tensor> averaged = gradients_of(net);

  REQUIRE(averaged.size() == 7);
  double largest = 0;
  for (const auto& [name, grad] : expected) {
    INFO(name);
    REQUIRE(averaged.at(name).defined() == grad.defined());  // frozen and unused: none anywhere
    if (grad.defined()) largest = std::max(largest, (averaged.at(name) - grad).abs().max().item<double>());
  }
  CHECK(expected.at("special").defined());
  INFO("largest difference from one process: " << largest);
  CHECK(largest < 1e-6);
  CHECK_FALSE(net.frozen.grad().defined());
  CHECK_FALSE(net.unused.grad().defined());

  // The test can fail: a mean of per-rank means misses by far more than the tolerance.
  for (auto& parameter : net.parameters()) parameter.mutable_grad() = torch::Tensor();
  auto [sum_again, count_again] = summed_loss(net, bands.narrow(0, begin, half), target.narrow(0, begin, half),
                                              valid.narrow(0, begin, half), my_special);
  (sum_again / count_again).backward();
  sync(net.parameters());
  CHECK((net.first->weight.grad() - expected.at("first.weight")).abs().max().item<double>() > 1e-4);

  // Freezing a parameter between steps changes the buckets; the others still match.
  for (auto& parameter : net.parameters()) parameter.mutable_grad() = torch::Tensor();
  net.first->weight.set_requires_grad(false);
  auto [sum_frozen, count_frozen] = summed_loss(net, bands.narrow(0, begin, half), target.narrow(0, begin, half),
                                                valid.narrow(0, begin, half), my_special);
  tinct::global_mean_loss(*group, sum_frozen, count_frozen).backward();
  sync(net.parameters());
  CHECK_FALSE(net.first->weight.grad().defined());
  CHECK((net.second->weight.grad() - expected.at("second.weight")).abs().max().item<double>() < 1e-6);
  CHECK((net.special.grad() - expected.at("special")).abs().max().item<double>() < 1e-6);
}

TEST_CASE("bucketed gradient averaging over two ranks with B/2 each equals one process with batch B") {
  CHECK_NOTHROW(run_two_ranks("rank: gradients of half batches"));
}

// ---- liveness: the survivors' own checks run in the hidden cases; their launcher names the dead rank.

namespace {

// Steps of a small all-reduce until `victim` does `fate` at step 5; the survivor must fail
// with a clear runtime error within the timeout. Returns that error's text.
std::string survive(const std::function<void()>& fate, int victim) {
  auto group = join_job();
  at::Tensor values = torch::ones({1000});
  Clock::time_point last_good = Clock::now();
  try {
    for (int step = 0; step < 50; ++step) {
      if (step == 5 && group->rank() == victim) fate();
      group->sum(values, "gradient all-reduce");
      last_good = Clock::now();
      std::this_thread::sleep_for(std::chrono::milliseconds(20));
    }
  } catch (const tinct::Error& error) {
    const double waited = seconds_since(last_good);
    INFO(error.what());
    CHECK(error.exit_code() == 1);
    CHECK(waited < kTimeoutSeconds + 3.0);
    std::cerr << "rank " << group->rank() << " (after " << waited << " s): " << error.what() << "\n";
    return error.what();
  }
  if (group->rank() != victim) FAIL("the survivor did not notice");
  return "";
}

}  // namespace

TEST_CASE("rank: rank 1 is killed", "[.]") {
  const std::string message = survive([] { ::raise(SIGKILL); }, 1);
  CHECK_THAT(message, Contains("rank 0 of 2: lost contact with rank 1 during the gradient all-reduce"));
  CHECK_THAT(message, Contains("--resume restarts from the last checkpoint"));
}

TEST_CASE("a killed rank makes the other stop within the timeout with a clear message") {
  try {
    run_two_ranks("rank: rank 1 is killed");
    FAIL("the launcher reported no failure");
  } catch (const tinct::Error& error) {
    CHECK_THAT(error.what(), Contains("local rank 1 of 2 failed first: it was killed by SIGKILL"));
    CHECK_THAT(error.what(), Contains("rank 0 exited with status 0"));  // its checks passed
  }
}

TEST_CASE("rank: rank 0 is killed", "[.]") {
  const std::string message = survive([] { ::raise(SIGKILL); }, 0);
  CHECK_THAT(message, Contains("rank 1 of 2: lost contact with rank 0 (which also hosts the rendezvous)"));
}

TEST_CASE("a killed rank 0 (which hosts the rendezvous) makes the other stop too") {
  try {
    run_two_ranks("rank: rank 0 is killed");
    FAIL("the launcher reported no failure");
  } catch (const tinct::Error& error) {
    CHECK_THAT(error.what(), Contains("local rank 0 of 2 failed first: it was killed by SIGKILL"));
    CHECK_THAT(error.what(), Contains("rank 1 exited with status 0"));
  }
}

TEST_CASE("rank: rank 1 goes silent", "[.]") {
  const auto go_silent = [] {
    std::this_thread::sleep_for(std::chrono::milliseconds(1000 * kTimeoutSeconds + 500));
    ::_exit(0);
  };
  const std::string message = survive(go_silent, 1);
  CHECK_THAT(message, Contains("rank 0 of 2: no answer from rank 1 within 3 s during the gradient all-reduce"));
}

TEST_CASE("a rank that stays silent longer than the timeout makes the other stop") {
  CHECK_NOTHROW(run_two_ranks("rank: rank 1 goes silent"));
}

TEST_CASE("rank: rank 1 never joins", "[.]") {
  const tinct::Rendezvous place = tinct::read_rendezvous(tinct::process_environment(), 0);
  if (place.rank == 1) ::_exit(3);
  const Clock::time_point start = Clock::now();
  try {
    join_job();
    FAIL("joined without rank 1");
  } catch (const tinct::Error& error) {
    std::cerr << "rank 0 (after " << seconds_since(start) << " s): " << error.what() << "\n";
    CHECK(seconds_since(start) < kTimeoutSeconds + 3.0);
    CHECK_THAT(error.what(), Contains("rank 0 of 2: only 1 of 2 ranks joined the job at 127.0.0.1:"));
  }
}

TEST_CASE("a rank that never arrives makes the others give up joining within the timeout") {
  try {
    run_two_ranks("rank: rank 1 never joins");
    FAIL("the launcher reported no failure");
  } catch (const tinct::Error& error) {
    CHECK_THAT(error.what(), Contains("local rank 1 of 2 failed first: it exited with status 3"));
    CHECK_THAT(error.what(), Contains("rank 0 exited with status 0"));
  }
}
