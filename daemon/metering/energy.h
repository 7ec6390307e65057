// daemon/metering/energy.h
// The energy of one stored reading's interval, from the reading and the channel's previous
// stored reading. Pure functions; any thread may call them.
//
// The rules, in the order they apply (shared/DESIGN.md "Energy"):
//  1. A previous reading counts only if it ended before this one and at most `max_gap_ms`
//     earlier (the site's max_gap_seconds). Beyond that the energy of the silence cannot be
//     placed in time, so the silence shows as missing coverage instead.
//  2. Register delta: both readings carry a real-energy register, the boot counter is the
//     same and the register did not go backwards. The delta is the energy of
//     (previous.end_ms, end_ms], fully measured even when datagrams in between were lost.
//  3. Register restart: a new boot, or a register lower than the previous one in the same
//     boot (the node rebooted without counting the boot). The node counts from zero at boot,
//     so the new value is the energy since boot; it is placed on the reading's own interval.
//     Energy is never negative.
//  4. Otherwise (no register, or no usable previous reading: the first reading of a channel
//     has no baseline for its register) integrate mean power over the reading's own interval
//     [end_ms - duration_ms, end_ms), at most `max_gap_ms` long, starting no earlier than the
//     previous reading's end (overlapping intervals are not counted twice).
// Apparent energy follows the same rule with the apparent register when both readings carry
// one, else mean apparent power times the span.
#pragma once

#include "daemon/metering/reading.h"

namespace ampledger {

// How an interval's energy was obtained; the rule number above.
enum class EnergySource : std::uint8_t {
  kRegisterDelta,    // rule 2
  kRegisterRestart,  // rule 3
  kIntegrated,       // rule 4
};

// Energy over the span [begin_ms, end_ms). An empty span (begin_ms == end_ms) carries none.
struct EnergySpan {
  UnixMs begin_ms = 0;
  UnixMs end_ms = 0;
  double real_wh = 0;
  double apparent_vah = 0;
  UnixMs covered_ms = 0;  // measured time in the span: all of it (the span is what was measured)
  Quality quality = Quality::kMeasured;
  EnergySource source = EnergySource::kIntegrated;

  UnixMs length_ms() const { return end_ms - begin_ms; }
  // Mean real power over the span in W; 0 for an empty span.
  double MeanWatts() const;
};

// The energy of `reading`'s interval given the channel's previous stored reading (nullptr if
// none). Precondition: previous, if given, is of the same channel. max_gap_ms > 0.
EnergySpan IntervalEnergy(const ChannelReading* previous, const ChannelReading& reading,
                          UnixMs max_gap_ms);

}  // namespace ampledger
