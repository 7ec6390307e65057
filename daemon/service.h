// daemon/service.h
// The running daemon: wires config, storage, ingest, the API and the scheduler, and owns their
// threads. Lifecycle (one direction only):
//
//   constructed --Start() ok--> running --RequestStop()/signal--> stopping --Wait()--> stopped
//        \--Start() fails--> stopped (nothing left running)
//
// In `stopping` the UDP socket stops reading, everything already accepted is flushed by the
// writer, acknowledged, and the threads are joined. Start(), Wait() from one thread;
// RequestStop() from any thread or a signal-waiting thread.
#pragma once

#include <atomic>
#include <cstdint>
#include <memory>
#include <string>

#include "config/config.h"
#include "config/status.h"

namespace ampledger {

class ServiceImpl;
class TariffSchedule;

class Service {
 public:
  explicit Service(Config config);
  ~Service();  // stops and joins if still running
  Service(const Service&) = delete;
  Service& operator=(const Service&) = delete;

  // Opens the database (running migrations), starts the writer, binds the UDP and HTTP
  // listeners and starts their threads. On failure nothing is left running.
  Status Start();

  // Asks the service to stop; returns at once. Safe from any thread.
  void RequestStop();

  // Blocks until stopped: flushes everything accepted, joins every thread. Returns the first
  // error that stopped the service early, or OK after a requested stop.
  Status Wait();

  // The bound ports (useful when the config asked for port 0).
  std::uint16_t udp_port() const;
  std::uint16_t http_port() const;

  // The site's tariffs by date, built by Start() (which fails on a bad tariff); empty before
  // Start() or when the site names no tariff. Read-only afterwards: any thread may call it
  // while the service runs.
  const TariffSchedule& tariffs() const;

 private:
  std::unique_ptr<ServiceImpl> impl_;
};

}  // namespace ampledger
