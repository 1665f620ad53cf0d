// How the ranks of an allocation share one study: rank 0 plans and states which fine-tunes
// are to run; every rank, as it has room, draws the next of them from a shared counter
// (quick and slow runs balance themselves), runs it as a child process and posts what
// became of it; rank 0 waits for every rank, gathers the outcomes and alone writes the
// study's files. One process draws every run itself and posts nothing.
#pragma once

#include <cstddef>
#include <cstdint>
#include <functional>
#include <memory>
#include <optional>
#include <string>
#include <vector>

namespace tinct {

class RankBoard;

struct RunOutcome {
  int rank = 0;  // the rank that ran it
  bool ok = false;
  std::string message;  // why it failed
};

class StudyRanks {
 public:
  StudyRanks();  // one process
  explicit StudyRanks(std::unique_ptr<RankBoard> board);
  ~StudyRanks();

  bool single() const { return !board_; }
  bool is_writer() const;
  int rank() const;
  int world() const;
  std::string rank_label() const;  // "rank 1 of 2"

  // Rank 0 passes the fine-tunes to run (indices into the plan's runs) and the plan's
  // fingerprint; every rank gets rank 0's list. Fails (usage) on a rank whose fingerprint
  // differs (another config, or another version of tinct).
  std::vector<std::size_t> share_todo(const std::vector<std::size_t>& todo, const std::string& fingerprint);
  // The next position in the shared list for this rank, none when all are taken.
  std::optional<std::size_t> next(std::size_t count);
  void report(std::size_t position, bool ok, const std::string& message);
  std::int64_t finished_runs();  // over every rank
  void keep_alive();
  // This rank ran every run it drew.
  void finish();
  void abandon(const std::string& message) noexcept;
  // Rank 0, after its own runs: waits (watching the others) until every rank has finished,
  // calling `waiting` now and then; then every position's outcome, by whichever rank.
  // One process: none (it knows its own).
  std::vector<RunOutcome> gather(std::size_t count, const std::function<void()>& waiting);

 private:
  std::unique_ptr<RankBoard> board_;
  std::size_t drawn_ = 0;  // one process: the next position
};

}  // namespace tinct
