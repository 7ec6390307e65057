// daemon/metering/local_time.cpp
#include "daemon/metering/local_time.h"

#include <chrono>
#include <cstdio>
#include <exception>

#include <date/tz.h>

namespace ampledger {
namespace {

using Milliseconds = std::chrono::milliseconds;

date::sys_time<Milliseconds> ToSys(UnixMs instant) {
  return date::sys_time<Milliseconds>{Milliseconds{instant}};
}

UnixMs FromSys(date::sys_time<Milliseconds> time) { return time.time_since_epoch().count(); }

// "YYYY-MM-DD", also for invalid dates (date::format throws on those).
std::string Format(date::year_month_day day) {
  char text[32];
  std::snprintf(text, sizeof text, "%04d-%02u-%02u", static_cast<int>(day.year()),
                static_cast<unsigned>(day.month()), static_cast<unsigned>(day.day()));
  return text;
}

}  // namespace

std::optional<date::year_month> ParseCycleMonth(std::string_view text) {
  auto digits = [&](size_t from, size_t count) {
    int value = 0;
    for (size_t i = from; i < from + count; ++i) {
      if (text[i] < '0' || text[i] > '9') return -1;
      value = value * 10 + (text[i] - '0');
    }
    return value;
  };
  if (text.size() != 7 || text[4] != '-') return std::nullopt;
  const int year = digits(0, 4);
  const int month = digits(5, 2);
  if (year < 1970 || month < 1 || month > 12) return std::nullopt;
  return date::year{year} / date::month{static_cast<unsigned>(month)};
}

std::string CycleMonthName(date::year_month month) {
  char text[16];
  std::snprintf(text, sizeof text, "%04d-%02u", static_cast<int>(month.year()),
                static_cast<unsigned>(month.month()));
  return text;
}

namespace {

Status CheckCycleDay(int cycle_day) {
  if (cycle_day < 1 || cycle_day > 28) {
    return Status::InvalidArgument("billing cycle day " + std::to_string(cycle_day) +
                                   " is not in 1..28");
  }
  return Status::Ok();
}

}  // namespace

Result<LocalTime> LocalTime::ForZone(const std::string& zone_name) {
  // date/tz reports an unknown zone, and an unreadable database, by throwing
  // std::runtime_error; neither may cross this boundary.
  try {
    date::get_tzdb();
  } catch (const std::exception& e) {
    return Status::Unavailable(std::string("cannot read the tz database: ") + e.what());
  }
  try {
    return LocalTime(date::locate_zone(zone_name));
  } catch (const std::exception&) {
    return Status::NotFound("time zone \"" + zone_name + "\" is not in the tz database");
  }
}

const std::string& LocalTime::zone_name() const { return zone_->name(); }

UnixMs LocalTime::StartOfDay(date::local_days day) const {
  date::local_time<Milliseconds> midnight{day.time_since_epoch()};
  return FromSys(zone_->to_sys(midnight, date::choose::earliest));
}

Result<TimeRange> LocalTime::Day(date::year_month_day day) const {
  if (!day.ok()) return Status::InvalidArgument("not a valid date: " + Format(day));
  date::local_days local{day};
  return TimeRange{StartOfDay(local), StartOfDay(local + date::days{1})};
}

Result<TimeRange> LocalTime::Month(date::year_month month) const {
  if (!month.ok()) return Status::InvalidArgument("not a valid month");
  date::local_days first{month / 1};
  date::local_days next{(month + date::months{1}) / 1};
  return TimeRange{StartOfDay(first), StartOfDay(next)};
}

Result<BillingCycle> LocalTime::CycleStarting(int cycle_day, date::year_month month) const {
  Status status = CheckCycleDay(cycle_day);
  if (!status.ok()) return status;
  if (!month.ok()) return Status::InvalidArgument("not a valid month");
  date::day day{static_cast<unsigned>(cycle_day)};
  BillingCycle cycle{month / day, (month + date::months{1}) / day, {}};
  cycle.range = TimeRange{StartOfDay(date::local_days{cycle.first_day}),
                          StartOfDay(date::local_days{cycle.next_first_day})};
  return cycle;
}

Result<BillingCycle> LocalTime::CycleContaining(int cycle_day, UnixMs instant) const {
  Status status = CheckCycleDay(cycle_day);
  if (!status.ok()) return status;
  date::year_month_day today = At(instant).date;
  date::year_month month = today.year() / today.month();
  if (today.day() < date::day{static_cast<unsigned>(cycle_day)}) month -= date::months{1};
  return CycleStarting(cycle_day, month);
}

Result<std::vector<UnixMs>> LocalTime::DayBuckets(date::year_month_day day) const {
  Result<TimeRange> range = Day(day);
  if (!range.ok()) return range.status();
  if (range->start_ms % kMsPerBucket != 0 || range->end_ms % kMsPerBucket != 0) {
    int offset = At(range->start_ms).utc_offset_seconds;
    return Status::InvalidArgument("local day " + Format(day) + " in " + zone_name() +
                                   " (UTC offset " + std::to_string(offset) +
                                   " s) does not start and end on 15-minute UTC boundaries");
  }
  std::vector<UnixMs> buckets;
  buckets.reserve(static_cast<std::size_t>(range->DurationMs() / kMsPerBucket));
  for (UnixMs start = range->start_ms; start < range->end_ms; start += kMsPerBucket) {
    buckets.push_back(start);
  }
  return buckets;
}

LocalMoment LocalTime::At(UnixMs instant) const {
  date::sys_time<Milliseconds> utc = ToSys(instant);
  date::sys_info info = zone_->get_info(utc);
  date::local_time<Milliseconds> local{utc.time_since_epoch() + info.offset};
  date::local_days day = date::floor<date::days>(local);
  LocalMoment moment;
  moment.date = date::year_month_day{day};
  moment.weekday = date::weekday{day};
  moment.minute_of_day =
      static_cast<int>(date::floor<std::chrono::minutes>(local - day).count());
  moment.utc_offset_seconds = static_cast<int>(info.offset.count());
  return moment;
}

}  // namespace ampledger
