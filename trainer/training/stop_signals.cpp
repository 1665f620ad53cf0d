// The handler does only async-signal-safe things: it sets a flag and writes one line,
// or, on the second signal, restores the default action and raises the signal again.
#include "training/stop_signals.hpp"

#include <signal.h>
#include <unistd.h>

#include <csignal>

namespace tinct {
namespace {

volatile std::sig_atomic_t g_signal = 0;
struct sigaction g_previous_int, g_previous_term;

void on_stop_signal(int number) {
  if (g_signal != 0) {
    ::signal(number, SIG_DFL);
    ::raise(number);
    return;
  }
  g_signal = number;
  static const char kMessage[] =
      "\ntinct: stopping after the current step and writing a checkpoint; signal again to exit at once\n";
  [[maybe_unused]] const ssize_t written = ::write(STDERR_FILENO, kMessage, sizeof(kMessage) - 1);
}

}  // namespace

StopSignals::StopSignals() {
  g_signal = 0;
  struct sigaction action {};
  action.sa_handler = on_stop_signal;
  sigemptyset(&action.sa_mask);
  action.sa_flags = SA_RESTART;
  ::sigaction(SIGINT, &action, &g_previous_int);
  ::sigaction(SIGTERM, &action, &g_previous_term);
}

StopSignals::~StopSignals() {
  ::sigaction(SIGINT, &g_previous_int, nullptr);
  ::sigaction(SIGTERM, &g_previous_term, nullptr);
}

bool StopSignals::requested() const { return g_signal != 0; }

std::string StopSignals::signal_name() const {
  switch (g_signal) {
    case SIGINT: return "SIGINT";
    case SIGTERM: return "SIGTERM";
    default: return "";
  }
}

}  // namespace tinct
