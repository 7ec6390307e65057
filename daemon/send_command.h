// daemon/send_command.h
// `ampledger send`: sends one pack to a daemon the way a node would, and waits for the
// acknowledgement — for checking wiring, keys and firewalls before a node exists. main.cpp
// parses the command line into SendOptions. Main thread only.
#pragma once

#include <iosfwd>
#include <optional>
#include <string>

namespace ampledger {

struct SendOptions {
  std::string to = "127.0.0.1:4717";  // the daemon's UDP address
  std::string config_path;            // take the node's key and auth mode from this config ...
  std::string node;                   // ... for this node id (required)
  std::string key_hex;                // or give the key directly (64 hex digits)
  std::string format = "cose";        // cose | cbor | json
  std::string alg = "256/64";         // COSE: HMAC 256/64 or 256/256
  std::string channel = "ct1";
  double amps = 0;
  std::optional<double> volts;
  std::optional<double> watts;
  std::optional<double> register_joules;
  unsigned boot = 1;
  unsigned seq = 1;
  double interval_seconds = 10;
  int wait_ms = 2000;  // how long to wait for the acknowledgement
};

// Returns the exit code: 0 acknowledged, 1 no acknowledgement in time, 2 bad options.
int RunSend(const SendOptions& options, std::ostream& out, std::ostream& err);

}  // namespace ampledger
