// daemon/metering/calibration.h
// A channel's calibration gain from one comparison (`ampledger calibrate`). ampledger multiplies
// a channel's current and power by its gain (config: node[].channel[].gain, 0.5 to 2). If the
// channel read `measured` amps while a trusted reference says the true current was `reference`,
// the gain that would have read true is current_gain x reference / measured.
//
// The reference is either a reference meter's reading (a clamp meter or a plug-in meter on the
// same conductor at the same time), or a known resistive load: a heater rated P watts at V_rated
// draws V_line x P / V_rated^2 amps at the line voltage V_line actually measured (Ohm's law
// with R = V_rated^2 / P). Pure functions of plain values; any thread may call them.
#pragma once

#include "config/status.h"

namespace ampledger {

// The range config accepts for a channel's gain. A result outside it means a wiring or CT-ratio
// mistake (wrong CT, two conductors through the core, another load running), not a calibration.
constexpr double kMinChannelGain = 0.5;
constexpr double kMaxChannelGain = 2.0;

// Current drawn by a resistive load rated `rated_watts` at `rated_volts` when the line is at
// `line_volts` (all > 0). InvalidArgument names the value at fault.
Result<double> ResistiveLoadAmps(double rated_watts, double rated_volts, double line_volts);

struct Calibration {
  double new_gain = 0;
  double error_percent = 0;  // how far the channel read from the reference: (measured - ref) / ref
};

// The gain that makes the channel read `reference_amps` where it read `measured_amps` with
// `current_gain` applied (all > 0). InvalidArgument when an input is not above 0 or the new
// gain falls outside [kMinChannelGain, kMaxChannelGain].
Result<Calibration> CalibrateGain(double current_gain, double measured_amps,
                                  double reference_amps);

}  // namespace ampledger
