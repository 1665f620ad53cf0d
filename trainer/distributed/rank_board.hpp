// A small key-value board shared by the ranks of a job whose processes work on their own
// (a study's fine-tunes) rather than in lock step: c10d's TCPStore, served by rank 0.
// Ranks post and read texts, draw numbers from shared counters (who takes the next piece
// of work), and show signs of life: each rank counts a beat while it waits, rank 0 fails
// naming a rank that stayed silent longer than the timeout without saying it finished,
// and the others fail when rank 0 (the board) stops answering. Nothing here is a
// collective: a rank busy for a while is not an error, only a silent one.
#pragma once

#include <chrono>
#include <cstdint>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "distributed/rendezvous.hpp"

namespace tinct {

class RankBoard {
 public:
  // Joins: blocks until every rank has counted itself in, at most `timeout_seconds`.
  RankBoard(const Rendezvous& place, int timeout_seconds);
  ~RankBoard();
  RankBoard(const RankBoard&) = delete;
  RankBoard& operator=(const RankBoard&) = delete;

  int rank() const { return place_.rank; }
  int world() const { return place_.world; }
  std::string rank_label() const;  // "rank 1 of 2"

  void post(const std::string& key, const std::string& value);
  std::optional<std::string> find(const std::string& key);
  // Waits for `key`, keeping alive, as long as the board answers (rank 0 may be busy).
  std::string wait_for(const std::string& key);
  // Adds 1 to a shared counter (0 at first) and returns its value before.
  std::int64_t draw(const std::string& counter);
  std::int64_t count(const std::string& counter);  // its value now

  // A beat (at most one a second); on rank 0 also the check of every other rank that has
  // not finished: its beats, or the error it posted. Fails (runtime) naming the lost rank.
  void keep_alive();
  // This rank is done: rank 0 stops watching it.
  void finish();
  // This rank failed with `message`: rank 0 fails naming it at its next keep_alive.
  // Best effort: the board may already be gone.
  void abandon(const std::string& message) noexcept;
  // Rank 0: whether every other rank has finished.
  bool all_finished();

 private:
  struct Store;
  struct Watch {
    std::int64_t beats = -1;
    std::chrono::steady_clock::time_point changed;
    bool finished = false;
  };
  void watch_others();
  [[noreturn]] void fail_lost_board(const std::exception& error) const;

  Rendezvous place_;
  int timeout_seconds_;
  std::unique_ptr<Store> store_;
  std::vector<Watch> watches_;  // rank 0: one per rank
  std::chrono::steady_clock::time_point last_beat_;
};

}  // namespace tinct
