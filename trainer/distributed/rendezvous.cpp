#include "distributed/rendezvous.hpp"

#include <cctype>

#include "distributed/host_list.hpp"
#include "util/error.hpp"

extern char** environ;

namespace tinct {
namespace {

const char* const kHint =
    "; a data-parallel job sets RANK, WORLD_SIZE, MASTER_ADDR and MASTER_PORT in every process "
    "(or runs under Slurm's srun); unset them all for a single process";

const std::string* find(const Environment& environment, const std::string& name) {
  const auto found = environment.find(name);
  return found == environment.end() ? nullptr : &found->second;
}

const std::string& require(const Environment& environment, const std::string& name, const std::string& because) {
  const std::string* value = find(environment, name);
  if (!value || value->empty()) fail_usage(name + " is not set but " + because + kHint);
  return *value;
}

long whole_number(const std::string& name, const std::string& text, long low, long high) {
  bool digits = !text.empty() && text.size() < 10;
  for (char c : text) digits = digits && std::isdigit(static_cast<unsigned char>(c));
  const long value = digits ? std::stol(text) : -1;
  if (!digits || value < low || value > high) {
    fail_usage(name + " = '" + text + "' must be a whole number from " + std::to_string(low) + " to " +
               std::to_string(high) + kHint);
  }
  return value;
}

int port_of(const Environment& environment, int default_port) {
  const std::string* port = find(environment, "MASTER_PORT");
  if (!port || port->empty()) return default_port;
  return static_cast<int>(whole_number("MASTER_PORT", *port, 1, 65535));
}

Rendezvous from_variables(const Environment& environment, int default_port) {
  Rendezvous place;
  place.source = "RANK/WORLD_SIZE";
  place.world = static_cast<int>(whole_number(
      "WORLD_SIZE", require(environment, "WORLD_SIZE", "RANK is"), 1, 1 << 20));
  place.rank = static_cast<int>(whole_number("RANK", require(environment, "RANK", "WORLD_SIZE is"), 0,
                                             place.world - 1));
  if (place.world > 1) {
    place.master_address = require(environment, "MASTER_ADDR", "WORLD_SIZE is " + std::to_string(place.world));
    place.master_port = port_of(environment, default_port);
  }
  return place;
}

Rendezvous from_slurm(const Environment& environment, int default_port) {
  Rendezvous place;
  place.source = "Slurm";
  place.world = static_cast<int>(whole_number("SLURM_NTASKS", *find(environment, "SLURM_NTASKS"), 1, 1 << 20));
  place.rank = static_cast<int>(whole_number(
      "SLURM_PROCID", require(environment, "SLURM_PROCID", "SLURM_NTASKS is"), 0, place.world - 1));
  if (place.world > 1) {
    const std::string* nodes = find(environment, "SLURM_JOB_NODELIST");
    if (!nodes) nodes = find(environment, "SLURM_NODELIST");
    if (!nodes || nodes->empty()) {
      fail_usage("SLURM_JOB_NODELIST is not set but SLURM_NTASKS is " + std::to_string(place.world) +
                 "; run tinct through srun inside the allocation, or set MASTER_ADDR to the host of task 0");
    }
    const std::string* master = find(environment, "MASTER_ADDR");
    place.master_address = master && !master->empty() ? *master : first_host(*nodes, "SLURM_JOB_NODELIST");
    place.master_port = port_of(environment, default_port);
  }
  return place;
}

}  // namespace

bool Rendezvous::on_loopback() const {
  return master_address == "localhost" || master_address == "::1" || master_address.rfind("127.", 0) == 0;
}

Environment process_environment() {
  Environment environment;
  for (char** entry = environ; entry && *entry; ++entry) {
    const std::string text(*entry);
    const std::size_t equals = text.find('=');
    if (equals != std::string::npos) environment[text.substr(0, equals)] = text.substr(equals + 1);
  }
  return environment;
}

Rendezvous read_rendezvous(const Environment& environment, int default_port) {
  Rendezvous place;
  place.source = "single process";
  if (find(environment, "RANK") || find(environment, "WORLD_SIZE")) {
    place = from_variables(environment, default_port);
  } else if (find(environment, "SLURM_NTASKS")) {
    place = from_slurm(environment, default_port);
  }
  if (const std::string* interface = find(environment, "GLOO_SOCKET_IFNAME")) place.interface = *interface;
  return place;
}

}  // namespace tinct
