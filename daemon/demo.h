// daemon/demo.h
// `ampledger demo`: the real daemon on a temporary database with the built-in example site
// (config/examples/duplex.toml, compiled in), listening on loopback only.
#pragma once

#include <string>

#include "config/config.h"

namespace ampledger {

struct DemoOptions {
  std::string http_listen = "127.0.0.1:8417";
  std::string udp_listen = "127.0.0.1:4717";
  std::string keep_dir;  // "" = a new folder under the system temp dir
};

// Writes the example config (examples/duplex.toml, its key file) and its tariff
// (tariffs/tannery-street-time-of-use.toml) into the demo folder, laid out as config/ is in the
// source tree, and loads it from there (so its relative database path lands in
// <folder>/examples), with the listen addresses of `options`.
Result<Config> PrepareDemo(const DemoOptions& options);

// Stores a new viewer token for the demo's API (the daemon must have created the database)
// and logs how to use it.
Status AnnounceDemoToken(const Config& config, const std::string& http_listen);

}  // namespace ampledger
