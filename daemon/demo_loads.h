// daemon/demo_loads.h
// Invented loads for the demo site (config/examples/duplex.toml): what each circuit draws at
// a given instant, as a pure function of local time, so backfilled history and the live demo
// agree. Appliance figures are plausible household values chosen for the demo, not
// measurements. Any thread.
#pragma once

#include <string>

#include "daemon/metering/local_time.h"
#include "daemon/metering/reading.h"

namespace ampledger {

// A circuit's true draw at one instant.
struct DemoLoad {
  double watts = 0;          // real power, >= 0 (solar: power exported)
  double power_factor = 1.0; // P / S
};

// The load of circuit `circuit_id` at `instant` (local schedules in `local`). Unknown
// circuits draw nothing. Deterministic: the same arguments give the same load.
DemoLoad DemoCircuitLoad(const std::string& circuit_id, UnixMs instant, const LocalTime& local);

}  // namespace ampledger
