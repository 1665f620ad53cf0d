#include "cli/process_guard.hpp"

#include <sys/resource.h>
#include <unistd.h>

#include <cstdint>
#include <cstdlib>
#include <exception>
#include <filesystem>
#include <new>

#include "util/error.hpp"
#include "util/log.hpp"

namespace {

// OpenBLAS starts its thread pool while the libraries load, before main, and each pool
// thread reserves a buffer of about 128 MiB; under an address-space limit (ulimit -v) a
// failed reservation is retried for ever. A .preinit_array function runs before any
// library's initialiser, so it can ask OpenBLAS for no pool when the limit is tight.
// LibTorch's own initialisers allocate while the libraries load, before main's try block;
// an allocation failure there would end in a bare "terminate called". Installed before
// any library starts, this says "out of memory" and exits 1 instead.
[[noreturn]] void on_terminate() {
  if (const std::exception_ptr current = std::current_exception()) {
    try {
      std::rethrow_exception(current);
    } catch (const std::bad_alloc&) {
      static const char kText[] =
          "error: out of memory while loading tinct's libraries; run where more memory is free "
          "(ulimit -v also limits it)\n";
      [[maybe_unused]] const auto written = ::write(2, kText, sizeof(kText) - 1);
      std::_Exit(1);
    } catch (const std::exception& error) {
      const std::string text = std::string("error: unexpected failure: ") + error.what() + "\n";
      [[maybe_unused]] const auto written = ::write(2, text.data(), text.size());
    } catch (...) {
    }
  }
  std::abort();
}

void no_blas_pool_under_tight_limit(int, char**, char**) {
  std::set_terminate(on_terminate);
  rlimit limit{};
  if (::getrlimit(RLIMIT_AS, &limit) != 0 || limit.rlim_cur == RLIM_INFINITY) return;
  if (limit.rlim_cur > (std::uint64_t{8} << 30)) return;
  ::setenv("OPENBLAS_NUM_THREADS", "1", /*overwrite=*/0);
}
__attribute__((section(".preinit_array"), used)) void (*const kBeforeLibraries)(int, char**, char**) =
    &no_blas_pool_under_tight_limit;

const char* const kOutOfMemory =
    "out of memory: the process could not allocate what it needed; lower train.batch, the chip size or "
    "--threads, or run where more memory is free (ulimit -v also limits it)";

// LibTorch's allocator reports a failed allocation as a c10::Error with this text.
bool is_allocation_failure(const std::string& message) {
  return message.find("can't allocate memory") != std::string::npos ||
         message.find("not enough memory") != std::string::npos;
}

}  // namespace

namespace tinct {

std::string command_word(int argc, char** argv) {
  for (int i = 1; i < argc; ++i) {
    const std::string word = argv[i];
    if (word == "--threads") {
      ++i;
      continue;
    }
    if (word.rfind("-", 0) != 0) return word;
  }
  return "";
}

int run_guarded(const std::function<void()>& command) {
  try {
    command();
    return 0;
  } catch (const Error& error) {
    log::error(error.what());
    return error.exit_code();
  } catch (const std::filesystem::filesystem_error& error) {
    // Raised by a file system call that no stage wrapped: still say which path and why.
    const std::string second = error.path2().empty() ? "" : " (and " + error.path2().string() + ")";
    log::error("cannot access " + error.path1().string() + second + ": " + error.code().message() +
               "; check the path, its permissions and the free space");
    return 1;
  } catch (const std::bad_alloc&) {
    log::error(kOutOfMemory);
    return 1;
  } catch (const std::exception& error) {
    if (is_allocation_failure(error.what())) {
      log::error(kOutOfMemory);
      return 1;
    }
    log::error(std::string("unexpected failure: ") + error.what());
    return 1;
  }
}

}  // namespace tinct
