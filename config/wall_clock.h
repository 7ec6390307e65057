// config/wall_clock.h
// The wall clock, read in one place. Domain code (daemon/metering) never calls it: it takes
// `now` as a parameter, so tests choose the time. Any thread.
#pragma once

#include <chrono>
#include <cstdint>

namespace ampledger {

// Milliseconds since 1970-01-01T00:00:00Z, as daemon/metering/reading.h's UnixMs.
inline std::int64_t WallClockMs() {
  return std::chrono::duration_cast<std::chrono::milliseconds>(
             std::chrono::system_clock::now().time_since_epoch())
      .count();
}

}  // namespace ampledger
