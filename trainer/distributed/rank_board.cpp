#include "distributed/rank_board.hpp"

#include <torch/csrc/distributed/c10d/TCPStore.hpp>

#include <csignal>
#include <thread>

#include "distributed/collective_failure.hpp"
#include "util/error.hpp"

namespace tinct {
namespace {

const std::string kPrefix = "tinct/board/";

std::vector<std::uint8_t> bytes_of(const std::string& text) { return {text.begin(), text.end()}; }

// Keys below the prefix, as the public operations take them.
std::string beat_key(int rank) { return "beat/" + std::to_string(rank); }
std::string finished_key(int rank) { return "finished/" + std::to_string(rank); }
std::string failure_key(int rank) { return "failed/" + std::to_string(rank); }

}  // namespace

struct RankBoard::Store {
  c10::intrusive_ptr<c10d::TCPStore> store;
};

RankBoard::RankBoard(const Rendezvous& place, int timeout_seconds)
    : place_(place), timeout_seconds_(timeout_seconds), store_(std::make_unique<Store>()) {
  std::signal(SIGPIPE, SIG_IGN);  // a board that is gone must be an error, not a signal
  const CollectiveContext context{place, timeout_seconds};
  const auto start = std::chrono::steady_clock::now();
  std::int64_t joined = 0;
  try {
    c10d::TCPStoreOptions options;
    options.port = static_cast<std::uint16_t>(place.master_port);
    options.isServer = place.rank == 0;
    options.numWorkers = static_cast<std::size_t>(place.world);
    options.waitWorkers = false;  // its wait gives up silently; the count below says who is missing
    options.timeout = std::chrono::seconds(timeout_seconds);
    store_->store = c10::make_intrusive<c10d::TCPStore>(place.master_address, options);
    joined = store_->store->add(kPrefix + "joined", 1);
    const auto deadline = start + std::chrono::seconds(timeout_seconds);
    while (joined < place.world && std::chrono::steady_clock::now() < deadline) {
      std::this_thread::sleep_for(std::chrono::milliseconds(20));
      joined = store_->store->add(kPrefix + "joined", 0);
    }
  } catch (const std::exception& error) {
    fail_join(context, error);
  }
  if (joined < place.world) fail_incomplete_join(context, static_cast<int>(joined));
  const auto now = std::chrono::steady_clock::now();
  watches_.assign(static_cast<std::size_t>(place.world), Watch{-1, now, false});
  last_beat_ = now - std::chrono::seconds(1);
}

RankBoard::~RankBoard() = default;

std::string RankBoard::rank_label() const {
  return "rank " + std::to_string(place_.rank) + " of " + std::to_string(place_.world);
}

void RankBoard::fail_lost_board(const std::exception& error) const {
  fail_runtime(rank_label() + ": lost contact with rank 0, which serves the job's board at " + place_.master_address +
               ":" + std::to_string(place_.master_port) + " (" + engine_text(error) + "); it stopped or cannot be "
               "reached. If it printed an error, that is the cause; otherwise check its machine and log");
}

void RankBoard::post(const std::string& key, const std::string& value) {
  try {
    store_->store->set(kPrefix + key, bytes_of(value));
  } catch (const Error&) {
    throw;
  } catch (const std::exception& error) {
    fail_lost_board(error);
  }
}

std::optional<std::string> RankBoard::find(const std::string& key) {
  try {
    if (!store_->store->check({kPrefix + key})) return std::nullopt;
    const std::vector<std::uint8_t> value = store_->store->get(kPrefix + key);
    return std::string(value.begin(), value.end());
  } catch (const std::exception& error) {
    fail_lost_board(error);
  }
}

std::string RankBoard::wait_for(const std::string& key) {
  for (;;) {
    if (auto value = find(key)) return *value;
    keep_alive();
    std::this_thread::sleep_for(std::chrono::milliseconds(50));
  }
}

std::int64_t RankBoard::draw(const std::string& counter) {
  try {
    return store_->store->add(kPrefix + counter, 1) - 1;
  } catch (const std::exception& error) {
    fail_lost_board(error);
  }
}

std::int64_t RankBoard::count(const std::string& counter) {
  try {
    return store_->store->add(kPrefix + counter, 0);
  } catch (const std::exception& error) {
    fail_lost_board(error);
  }
}

void RankBoard::keep_alive() {
  const auto now = std::chrono::steady_clock::now();
  if (now - last_beat_ >= std::chrono::seconds(1)) {
    count(beat_key(place_.rank));  // any answer shows the board is there
    draw(beat_key(place_.rank));
    last_beat_ = now;
  }
  if (place_.rank == 0) watch_others();
}

void RankBoard::watch_others() {
  const auto now = std::chrono::steady_clock::now();
  for (int other = 1; other < place_.world; ++other) {
    Watch& watch = watches_[static_cast<std::size_t>(other)];
    if (watch.finished) continue;
    if (const auto failure = find(failure_key(other))) {
      fail_runtime(rank_label() + ": rank " + std::to_string(other) + " stopped: " + *failure);
    }
    if (find(finished_key(other))) {
      watch.finished = true;
      continue;
    }
    const std::int64_t beats = count(beat_key(other));
    if (beats != watch.beats) {
      watch.beats = beats;
      watch.changed = now;
    } else if (now - watch.changed > std::chrono::seconds(timeout_seconds_)) {
      fail_runtime(rank_label() + ": no sign of life from rank " + std::to_string(other) + " for " +
                   std::to_string(timeout_seconds_) + " s: it stopped, hangs or cannot be reached. If it printed "
                   "an error, that is the cause; otherwise check its machine and log");
    }
  }
}

void RankBoard::finish() { post(finished_key(place_.rank), "1"); }

void RankBoard::abandon(const std::string& message) noexcept {
  try {
    store_->store->set(kPrefix + failure_key(place_.rank), bytes_of(message));
  } catch (...) {
  }
}

bool RankBoard::all_finished() {
  for (int other = 1; other < place_.world; ++other) {
    if (!find(finished_key(other))) return false;
  }
  return true;
}

}  // namespace tinct
