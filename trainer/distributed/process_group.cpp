#include "distributed/process_group.hpp"

#include <torch/csrc/distributed/c10d/ProcessGroupGloo.hpp>
#include <torch/csrc/distributed/c10d/TCPStore.hpp>
#include <torch/torch.h>

#include <chrono>
#include <csignal>
#include <thread>

#include "distributed/collective_failure.hpp"
#include "distributed/route_address.hpp"
#include "util/error.hpp"
#include "util/log.hpp"

namespace tinct {

struct ProcessGroup::Gloo {
  c10::intrusive_ptr<c10d::Store> store;
  c10::intrusive_ptr<c10d::ProcessGroupGloo> group;
  CollectiveContext context;

  void wait(const c10::intrusive_ptr<c10d::Work>& work, const std::string& what) {
    try {
      work->wait();
    } catch (const std::exception& error) {
      fail_collective(context, what, error);
    }
  }
};

namespace {

std::shared_ptr<::gloo::transport::Device> gloo_device(const Rendezvous& place) {
  if (!place.interface.empty()) return c10d::ProcessGroupGloo::createDeviceForInterface(place.interface);
  return c10d::ProcessGroupGloo::createDeviceForHostname(local_address_towards(place.master_address));
}

// Every rank counts itself in, then waits until all have, at most the timeout since `start`.
void wait_for_ranks(c10d::Store& store, const CollectiveContext& context, std::chrono::steady_clock::time_point start) {
  const std::string key = "tinct/joined";
  std::int64_t joined = store.add(key, 1);
  const auto deadline = start + std::chrono::seconds(context.timeout_seconds);
  while (joined < context.place.world && std::chrono::steady_clock::now() < deadline) {
    std::this_thread::sleep_for(std::chrono::milliseconds(20));
    joined = store.add(key, 0);
  }
  if (joined < context.place.world) fail_incomplete_join(context, static_cast<int>(joined));
}

}  // namespace

ProcessGroup::ProcessGroup() = default;

ProcessGroup::ProcessGroup(const Rendezvous& place, const DistributedSettings& settings)
    : rank_(place.rank), world_(place.world) {
  if (place.single()) return;
  // A peer that dies closes its sockets; writing to them must be an error, not SIGPIPE.
  std::signal(SIGPIPE, SIG_IGN);
  gloo_ = std::make_unique<Gloo>();
  gloo_->context = {place, settings.timeout_seconds};
  const std::chrono::milliseconds timeout(1000LL * settings.timeout_seconds);
  const auto start = std::chrono::steady_clock::now();
  try {
    c10d::TCPStoreOptions options;
    options.port = static_cast<std::uint16_t>(place.master_port);
    options.isServer = place.rank == 0;
    options.numWorkers = static_cast<std::size_t>(place.world);
    options.waitWorkers = false;  // its wait gives up silently; wait_for_ranks says who is missing
    options.timeout = timeout;
    gloo_->store = c10::make_intrusive<c10d::TCPStore>(place.master_address, options);
    wait_for_ranks(*gloo_->store, gloo_->context, start);
    auto group_options = c10d::ProcessGroupGloo::Options::create(timeout);
    group_options->devices.push_back(gloo_device(place));
    group_options->threads = 1;  // collectives run one at a time, in step order
    gloo_->group = c10::make_intrusive<c10d::ProcessGroupGloo>(gloo_->store, place.rank, place.world, group_options);
  } catch (const Error&) {
    throw;
  } catch (const std::exception& error) {
    fail_join(gloo_->context, error);
  }
  log::info("distributed: rank " + std::to_string(rank_) + " of " + std::to_string(world_) + " joined through " +
            place.master_address + ":" + std::to_string(place.master_port) + " (" + place.source + ")");
}

ProcessGroup::~ProcessGroup() = default;

void ProcessGroup::sum(std::vector<double>& values, const std::string& what) {
  if (single() || values.empty()) return;
  at::Tensor tensor = torch::tensor(values, torch::kFloat64);
  sum(tensor, what);
  const double* summed = tensor.data_ptr<double>();
  std::copy(summed, summed + values.size(), values.begin());
}

bool ProcessGroup::any(bool value, const std::string& what) {
  std::vector<double> count{value ? 1.0 : 0.0};
  sum(count, what);
  return count[0] > 0;
}

void ProcessGroup::sum(at::Tensor& tensor, const std::string& what) {
  if (single()) return;
  std::vector<at::Tensor> tensors{tensor};
  gloo_->wait(gloo_->group->allreduce(tensors), what);
}

void ProcessGroup::broadcast(at::Tensor& tensor, const std::string& what) {
  if (single()) return;
  std::vector<at::Tensor> tensors{tensor};
  c10d::BroadcastOptions options;
  options.rootRank = 0;
  gloo_->wait(gloo_->group->broadcast(tensors, options), what);
}

void ProcessGroup::barrier(const std::string& what) {
  if (single()) return;
  gloo_->wait(gloo_->group->barrier(), what);
}

}  // namespace tinct
