#include "study/study_ranks.hpp"

#include <chrono>
#include <sstream>
#include <thread>

#include "distributed/rank_board.hpp"
#include "util/error.hpp"

namespace tinct {
namespace {

std::string todo_text(const std::vector<std::size_t>& todo, const std::string& fingerprint) {
  std::string text = fingerprint + "\n";
  for (const std::size_t index : todo) text += std::to_string(index) + " ";
  return text;
}

std::string outcome_key(std::size_t position) { return "study/outcome/" + std::to_string(position); }

RunOutcome outcome_of(const std::string& text) {
  std::istringstream in(text);
  RunOutcome outcome;
  std::string ok;
  in >> outcome.rank >> ok;
  outcome.ok = ok == "ok";
  in.get();
  std::getline(in, outcome.message, '\0');
  return outcome;
}

}  // namespace

StudyRanks::StudyRanks() = default;
StudyRanks::StudyRanks(std::unique_ptr<RankBoard> board) : board_(std::move(board)) {}
StudyRanks::~StudyRanks() = default;

bool StudyRanks::is_writer() const { return rank() == 0; }
int StudyRanks::rank() const { return board_ ? board_->rank() : 0; }
int StudyRanks::world() const { return board_ ? board_->world() : 1; }
std::string StudyRanks::rank_label() const { return board_ ? board_->rank_label() : "rank 0 of 1"; }

std::vector<std::size_t> StudyRanks::share_todo(const std::vector<std::size_t>& todo, const std::string& fingerprint) {
  if (single()) return todo;
  if (is_writer()) {
    board_->post("study/todo", todo_text(todo, fingerprint));
    return todo;
  }
  std::istringstream in(board_->wait_for("study/todo"));
  std::string theirs;
  std::getline(in, theirs);
  if (theirs != fingerprint) {
    fail_usage(rank_label() + ": this rank planned another study than rank 0 (the runs' configs differ); start "
               "every rank with the same study config, the same files beside it and the same tinct");
  }
  std::vector<std::size_t> shared;
  for (std::size_t index; in >> index;) shared.push_back(index);
  return shared;
}

std::optional<std::size_t> StudyRanks::next(std::size_t count) {
  const std::size_t position = single() ? drawn_++ : static_cast<std::size_t>(board_->draw("study/next"));
  if (position >= count) return std::nullopt;
  return position;
}

void StudyRanks::report(std::size_t position, bool ok, const std::string& message) {
  if (single()) return;
  board_->post(outcome_key(position), std::to_string(rank()) + " " + (ok ? "ok" : "failed") + "\n" + message);
  board_->draw("study/finished");
}

std::int64_t StudyRanks::finished_runs() { return single() ? 0 : board_->count("study/finished"); }

void StudyRanks::keep_alive() {
  if (!single()) board_->keep_alive();
}

void StudyRanks::finish() {
  if (!single()) board_->finish();
}

void StudyRanks::abandon(const std::string& message) noexcept {
  if (!single()) board_->abandon(message);
}

std::vector<RunOutcome> StudyRanks::gather(std::size_t count, const std::function<void()>& waiting) {
  if (single()) return {};
  std::vector<RunOutcome> outcomes(count);
  while (!board_->all_finished()) {
    board_->keep_alive();
    waiting();
    std::this_thread::sleep_for(std::chrono::milliseconds(100));
  }
  for (std::size_t position = 0; position < count; ++position) {
    const auto text = board_->find(outcome_key(position));
    if (!text) fail_runtime("study: no rank reported run " + std::to_string(position + 1) + " of the shared list");
    outcomes[position] = outcome_of(*text);
  }
  return outcomes;
}

}  // namespace tinct
