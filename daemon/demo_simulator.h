// daemon/demo_simulator.h
// Simulated sensor nodes for `ampledger demo`. Each configured node gets a NodeClient (the
// real protocol over UDP on loopback, COSE_Mac0 or plain as configured) and reports the demo
// loads (demo_loads.h) for its channels. At start it backfills `history_days` of 60-second
// intervals as fast as acknowledgements come back, then reports live every `live_interval`.
// Live, it loses a few percent of datagrams (resent later), takes one node offline for a few
// minutes (its backlog is resent when it returns) and reboots another once (boot counter up,
// sequence and energy registers from zero) — the faults real nodes meet.
// Start()/Stop() from one thread; the simulation runs on a thread of its own.
#pragma once

#include <atomic>
#include <chrono>
#include <memory>
#include <string>
#include <thread>
#include <vector>

#include "config/config.h"
#include "config/status.h"
#include "daemon/ingest/node_client.h"

namespace ampledger {

struct DemoSimulatorOptions {
  int history_days = 14;
  std::chrono::milliseconds live_interval{5000};
  double loss_fraction = 0.03;
  std::chrono::seconds outage_after{120};   // the roof node goes quiet this long into live ...
  std::chrono::seconds outage_length{180};  // ... for this long
  std::chrono::seconds reboot_after{90};    // the lower panel's node reboots once
};

class DemoSimulator {
 public:
  // `daemon_udp` is where the daemon listens ("127.0.0.1:4717").
  DemoSimulator(const Config& config, std::string daemon_udp, DemoSimulatorOptions options);
  ~DemoSimulator();
  DemoSimulator(const DemoSimulator&) = delete;
  DemoSimulator& operator=(const DemoSimulator&) = delete;

  Status Start();
  void Stop();

 private:
  struct SimulatedNode;

  void Run();
  void Backfill();
  void Live();
  bool Offline(const SimulatedNode& node, std::chrono::steady_clock::duration elapsed) const;
  void Reboot(SimulatedNode& node);

  const Config& config_;
  const std::string daemon_udp_;
  const DemoSimulatorOptions options_;
  std::vector<std::unique_ptr<SimulatedNode>> nodes_;
  std::atomic<bool> stopping_{false};
  std::thread thread_;
};

}  // namespace ampledger
