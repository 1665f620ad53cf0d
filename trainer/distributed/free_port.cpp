#include "distributed/free_port.hpp"

#include <arpa/inet.h>
#include <netinet/in.h>
#include <sys/socket.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>
#include <string>

#include "util/error.hpp"

namespace tinct {

int free_loopback_port() {
  const int socket_fd = ::socket(AF_INET, SOCK_STREAM, 0);
  if (socket_fd < 0) fail_runtime(std::string("cannot open a socket to find a free port: ") + std::strerror(errno));
  sockaddr_in address{};
  address.sin_family = AF_INET;
  address.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  address.sin_port = 0;  // the kernel picks an unused port
  socklen_t length = sizeof(address);
  const bool ok = ::bind(socket_fd, reinterpret_cast<sockaddr*>(&address), sizeof(address)) == 0 &&
                  ::getsockname(socket_fd, reinterpret_cast<sockaddr*>(&address), &length) == 0;
  const int error = errno;
  ::close(socket_fd);
  if (!ok) fail_runtime(std::string("cannot find a free port on 127.0.0.1: ") + std::strerror(error));
  return ntohs(address.sin_port);
}

}  // namespace tinct
