// A TCP port on the loopback interface that nothing listens on right now, for the
// rendezvous of local ranks. Another program could take it before rank 0 binds it; rank 0
// then fails naming the port, and a second launch picks another.
#pragma once

namespace tinct {

int free_loopback_port();

}  // namespace tinct
