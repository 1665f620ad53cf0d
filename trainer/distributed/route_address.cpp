#include "distributed/route_address.hpp"

#include <arpa/inet.h>
#include <netdb.h>
#include <sys/socket.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>

#include "util/error.hpp"

namespace tinct {

std::string local_address_towards(const std::string& host) {
  addrinfo hints{};
  hints.ai_family = AF_UNSPEC;
  hints.ai_socktype = SOCK_DGRAM;
  addrinfo* found = nullptr;
  const int resolved = ::getaddrinfo(host.c_str(), "9", &hints, &found);
  if (resolved != 0 || !found) {
    fail_runtime("the rendezvous host '" + host + "' does not resolve (" + ::gai_strerror(resolved) +
                 "); set MASTER_ADDR to a name or address every rank can reach");
  }
  std::string address;
  for (addrinfo* candidate = found; candidate && address.empty(); candidate = candidate->ai_next) {
    const int socket_fd = ::socket(candidate->ai_family, SOCK_DGRAM, 0);
    if (socket_fd < 0) continue;
    sockaddr_storage local{};
    socklen_t length = sizeof(local);
    if (::connect(socket_fd, candidate->ai_addr, candidate->ai_addrlen) == 0 &&
        ::getsockname(socket_fd, reinterpret_cast<sockaddr*>(&local), &length) == 0) {
      char text[INET6_ADDRSTRLEN] = {};
      const void* raw = local.ss_family == AF_INET
                            ? static_cast<const void*>(&reinterpret_cast<sockaddr_in*>(&local)->sin_addr)
                            : static_cast<const void*>(&reinterpret_cast<sockaddr_in6*>(&local)->sin6_addr);
      if (::inet_ntop(local.ss_family, raw, text, sizeof(text))) address = text;
    }
    ::close(socket_fd);
  }
  ::freeaddrinfo(found);
  if (address.empty()) {
    fail_runtime("no network route from this machine to the rendezvous host '" + host +
                 "'; check MASTER_ADDR, or name the interface to use in GLOO_SOCKET_IFNAME");
  }
  return address;
}

}  // namespace tinct
