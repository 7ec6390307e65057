// daemon/metering/calibration.cpp
#include "daemon/metering/calibration.h"

#include <cmath>
#include <string>

namespace ampledger {
namespace {

Status Positive(const char* name, double value) {
  if (std::isfinite(value) && value > 0) return Status::Ok();
  return Status::InvalidArgument(std::string(name) + ": expected a number above 0, got " +
                                 std::to_string(value));
}

}  // namespace

Result<double> ResistiveLoadAmps(double rated_watts, double rated_volts, double line_volts) {
  if (Status s = Positive("load-watts", rated_watts); !s.ok()) return s;
  if (Status s = Positive("load-rated-volts", rated_volts); !s.ok()) return s;
  if (Status s = Positive("line-volts", line_volts); !s.ok()) return s;
  double ohms = rated_volts * rated_volts / rated_watts;
  return line_volts / ohms;
}

Result<Calibration> CalibrateGain(double current_gain, double measured_amps,
                                  double reference_amps) {
  if (Status s = Positive("current-gain", current_gain); !s.ok()) return s;
  if (Status s = Positive("measured-amps", measured_amps); !s.ok()) return s;
  if (Status s = Positive("reference-amps", reference_amps); !s.ok()) return s;
  Calibration result;
  result.new_gain = current_gain * reference_amps / measured_amps;
  result.error_percent = (measured_amps - reference_amps) / reference_amps * 100;
  if (result.new_gain < kMinChannelGain || result.new_gain > kMaxChannelGain) {
    return Status::InvalidArgument(
        "the new gain would be " + std::to_string(result.new_gain) +
        ", outside the 0.5 to 2 a channel accepts: check the CT's ratio, that only one "
        "conductor passes through it, and that nothing else on the circuit was running");
  }
  return result;
}

}  // namespace ampledger
