// This machine's address on the route to another host: what peers on other machines can
// reach us on. A host name that resolves to 127.0.1.1 locally (Debian's /etc/hosts) would
// be useless to them, so the address comes from the routing table (a UDP socket connected
// towards the host; no packet is sent).
#pragma once

#include <string>

namespace tinct {

// Fails (runtime) naming the host when it does not resolve or no route leads there.
std::string local_address_towards(const std::string& host);

}  // namespace tinct
