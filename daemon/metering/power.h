// daemon/metering/power.h
// Single-phase power quantities as IEEE Std 1459-2010 defines them (active power P, apparent
// power S = V_rms x I_rms, nonactive power N, power factor PF = P/S), and the RMS of a sampled
// waveform, as a node's firmware or the CT planning tool computes it. Pure functions of plain
// values; any thread may call them.
#pragma once

#include <cstdint>
#include <span>

namespace ampledger {

// S = V_rms x I_rms, in VA. Both inputs are RMS values, hence >= 0.
double ApparentPower(double volts_rms, double amps_rms);

// PF = P / S. Signed like P (negative when power flows from the load towards the supply).
// Returns 0 when S is 0: with no current there is no power factor to speak of, and 0 keeps
// sums and averages finite.
double PowerFactor(double real_watts, double apparent_va);

// N = sqrt(S^2 - P^2), in var: everything in S that is not active power (reactive and
// distortion power together). When |P| exceeds S by measurement error the result is 0.
double NonactivePower(double real_watts, double apparent_va);

// sqrt(mean(x^2)) of `samples`: the RMS of a waveform sampled evenly over whole cycles.
// 0 for an empty span.
double Rms(std::span<const double> samples);

// RMS of the AC part of `samples`: the mean (the DC bias a single-supply ADC front end adds
// at mid-scale) is removed first. 0 for an empty span. Two passes, so a large bias does not
// swamp a small signal in floating point.
double AcRms(std::span<const double> samples);

// AcRms() of raw ADC counts, scaled to physical units: `units_per_count` is, for a current
// channel, amps of primary current per count (CT ratio / burden ohms x volts per count).
double AcRmsOfCounts(std::span<const std::int32_t> counts, double units_per_count);

// P = mean(v x i): active power of simultaneously sampled voltage and current waveforms, in W
// (IEEE 1459: the average of instantaneous power over whole cycles). Both spans must have the
// same length; 0 for empty spans.
double ActivePower(std::span<const double> volts, std::span<const double> amps);

}  // namespace ampledger
