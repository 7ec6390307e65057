// daemon/node_command.h
// `ampledger node add` (a new node's key and config snippet) and `ampledger calibrate` (a
// channel's gain from a reference). main.cpp parses the command line into the option structs.
// Main thread only (write to the given streams and, for node add, one key file).
#pragma once

#include <iosfwd>
#include <string>

#include "config/status.h"

namespace ampledger {

struct NodeAddOptions {
  std::string config_path;  // the site's config file; must exist. The key file goes beside it.
  std::string node_id;      // 1 to 64 characters of A-Z a-z 0-9 . _ -
  int channels = 1;         // channel entries in the snippet (ct1..ctN), 1 to 64
  std::string owner;        // if set, the key file is chowned to this user (the daemon's)
};

struct NodeKeyFile {
  std::string path;     // "<config dir>/<id>.key"
  std::string key_hex;  // 64 lower-case hex digits
};

// Writes a fresh 256-bit key (OpenSSL RAND_bytes) as 64 hex digits to "<config dir>/<id>.key",
// created with mode 0600 and never overwritten. Returns the file and the key, or the error
// (InvalidArgument for bad options, IOError naming the path). Nothing is logged.
Result<NodeKeyFile> CreateNodeKeyFile(const NodeAddOptions& options);

// The TOML to paste into the config for the node: [[node]] with key_file, and one
// [[node.channel]] per channel. `key_file` is written relative to the config's folder.
std::string NodeSnippet(const NodeAddOptions& options, const std::string& key_file_name);

// Runs `ampledger node add`: creates the key file, prints the key once and the snippet to
// `out`. Returns the exit code (0, 2 for bad options, 1 when the file cannot be written).
int RunNodeAdd(const NodeAddOptions& options, std::ostream& out, std::ostream& err);

struct CalibrateOptions {
  double current_gain = 1;     // the channel's gain when it read measured_amps
  double measured_amps = 0;    // what ampledger showed for the channel
  double reference_amps = 0;   // a reference meter's reading; or, for a known resistive load:
  double load_watts = 0;       //   its rated power,
  double load_rated_volts = 0; //   the voltage that rating is for,
  double line_volts = 0;       //   and the line voltage measured during the test
};

// Runs `ampledger calibrate`: prints the channel's error and its new gain as a config line.
// Exactly one reference must be given (reference_amps, or the three load values).
int RunCalibrate(const CalibrateOptions& options, std::ostream& out, std::ostream& err);

}  // namespace ampledger
