// daemon/metering/main_meter.cpp
#include "daemon/metering/main_meter.h"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <optional>

#include <date/date.h>

namespace ampledger {
namespace {

std::string UtcText(UnixMs instant) {
  using namespace std::chrono;
  return date::format("%FT%TZ", floor<seconds>(sys_time<milliseconds>(milliseconds(instant))));
}

std::string Kwh(double kwh) {
  char text[32];
  std::snprintf(text, sizeof text, "%.10g kWh", kwh);
  return text;
}

std::string Describe(const MainMeterRead& read) {
  std::string text = read.kind == MeterReadKind::kRegister
                         ? "register read at " + UtcText(read.at_ms)
                         : "period read " + UtcText(read.period_start_ms) + " to " +
                               UtcText(read.at_ms);
  if (read.id != 0) text += " (read " + std::to_string(read.id) + ")";
  return text;
}

std::vector<const MainMeterRead*> OfKind(const std::vector<MainMeterRead>& reads,
                                         MeterReadKind kind) {
  std::vector<const MainMeterRead*> out;
  for (const MainMeterRead& read : reads) {
    if (read.kind == kind) out.push_back(&read);
  }
  std::sort(out.begin(), out.end(), [](const MainMeterRead* a, const MainMeterRead* b) {
    return a->kind == MeterReadKind::kRegister ? a->at_ms < b->at_ms
                                               : a->period_start_ms < b->period_start_ms;
  });
  return out;
}

// The register at `t`, from the sorted register reads; nullopt when no read lies on one side.
std::optional<double> RegisterAt(const std::vector<const MainMeterRead*>& registers, UnixMs t) {
  auto before = [](const MainMeterRead* read, UnixMs at) { return read->at_ms < at; };
  auto after = std::lower_bound(registers.begin(), registers.end(), t, before);
  if (after != registers.end() && (*after)->at_ms == t) return (*after)->kwh;
  if (after == registers.begin() || after == registers.end()) return std::nullopt;
  const MainMeterRead& a = **(after - 1);
  const MainMeterRead& b = **after;
  double fraction = static_cast<double>(t - a.at_ms) / static_cast<double>(b.at_ms - a.at_ms);
  return a.kwh + (b.kwh - a.kwh) * fraction;
}

}  // namespace

const char* MeterReadKindName(MeterReadKind kind) {
  return kind == MeterReadKind::kRegister ? "register" : "period";
}

Status CheckNewMeterRead(const std::vector<MainMeterRead>& existing, const MainMeterRead& read) {
  if (!std::isfinite(read.kwh) || read.kwh < 0 || read.kwh > kMaxMeterKwh) {
    return Status::InvalidArgument("kWh must be a number from 0 to 1e9");
  }
  if (read.kind == MeterReadKind::kPeriod && read.period_start_ms >= read.at_ms) {
    return Status::InvalidArgument("a period must end after it starts");
  }
  for (const MainMeterRead& other : existing) {
    if (other.kind != read.kind) continue;
    if (read.kind == MeterReadKind::kRegister) {
      bool conflict = other.at_ms == read.at_ms ||
                      (other.at_ms < read.at_ms && other.kwh > read.kwh) ||
                      (other.at_ms > read.at_ms && other.kwh < read.kwh);
      if (conflict) {
        return Status::InvalidArgument(
            "register " + Kwh(read.kwh) + " at " + UtcText(read.at_ms) +
            (other.at_ms == read.at_ms ? " has the same time as the "
                                       : " would make the register count backwards against the ") +
            Describe(other) + " of " + Kwh(other.kwh));
      }
    } else if (read.period_start_ms < other.at_ms && other.period_start_ms < read.at_ms) {
      return Status::InvalidArgument("the period overlaps the " + Describe(other));
    }
  }
  return Status::Ok();
}

Result<MeterEnergy> MainMeterEnergy(const std::vector<MainMeterRead>& reads, TimeRange range) {
  std::vector<const MainMeterRead*> registers = OfKind(reads, MeterReadKind::kRegister);
  std::optional<double> start = RegisterAt(registers, range.start_ms);
  std::optional<double> end = RegisterAt(registers, range.end_ms);
  if (start && end) {
    if (*end < *start) {
      return Status::InvalidArgument("main meter register reads go backwards between " +
                                     UtcText(range.start_ms) + " and " + UtcText(range.end_ms));
    }
    return MeterEnergy{*end - *start, "main meter register reads"};
  }
  std::vector<const MainMeterRead*> periods = OfKind(reads, MeterReadKind::kPeriod);
  double kwh = 0;
  UnixMs covered_to = range.start_ms;  // [range.start_ms, covered_to) is covered so far
  for (const MainMeterRead* period : periods) {
    if (period->at_ms <= range.start_ms || period->period_start_ms >= range.end_ms) continue;
    if (period->period_start_ms > covered_to) break;  // a gap
    if (period->period_start_ms < covered_to && covered_to > range.start_ms) {
      return Status::InvalidArgument("main meter period reads overlap: " + Describe(*period));
    }
    UnixMs from = std::max(period->period_start_ms, range.start_ms);
    UnixMs to = std::min(period->at_ms, range.end_ms);
    kwh += period->kwh * static_cast<double>(to - from) /
           static_cast<double>(period->at_ms - period->period_start_ms);
    covered_to = period->at_ms;
  }
  if (covered_to >= range.end_ms) return MeterEnergy{kwh, "main meter period reads"};
  if (!periods.empty() && covered_to > range.start_ms) {
    return Status::NotFound("main meter period reads cover " + UtcText(range.start_ms) + " to " +
                            UtcText(covered_to) + " only, not up to " + UtcText(range.end_ms));
  }
  return Status::NotFound("no main meter reads cover " + UtcText(range.start_ms) + " to " +
                          UtcText(range.end_ms) +
                          ": need a register read at or before the start and one at or after "
                          "the end, or period reads covering the whole span");
}

}  // namespace ampledger
