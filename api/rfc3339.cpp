// api/rfc3339.cpp
#include "api/rfc3339.h"

#include <chrono>
#include <cstdio>

namespace ampledger {
namespace {

// The instants of 0000-01-01T00:00:00Z and 10000-01-01T00:00:00Z (days from 1970 by
// date::sys_days).
constexpr UnixMs kFirstInstant = -719528LL * 86400 * kMsPerSecond;
constexpr UnixMs kEndInstant = 2932897LL * 86400 * kMsPerSecond;

const LocalTime& UtcTime() {
  static const LocalTime utc = LocalTime::ForZone("UTC").value();
  return utc;
}

// Reads exactly `count` decimal digits at `*pos`.
bool Digits(std::string_view text, std::size_t* pos, int count, int* value) {
  if (*pos + count > text.size()) return false;
  *value = 0;
  for (int i = 0; i < count; ++i) {
    char c = text[*pos + i];
    if (c < '0' || c > '9') return false;
    *value = *value * 10 + (c - '0');
  }
  *pos += count;
  return true;
}

bool Expect(std::string_view text, std::size_t* pos, char a, char b = '\0') {
  if (*pos >= text.size()) return false;
  char c = text[*pos];
  if (c != a && (b == '\0' || c != b)) return false;
  ++*pos;
  return true;
}

}  // namespace

std::optional<UnixMs> ParseRfc3339(std::string_view text) {
  std::size_t pos = 0;
  int year, month, day, hour, minute, second;
  if (!Digits(text, &pos, 4, &year) || !Expect(text, &pos, '-') ||
      !Digits(text, &pos, 2, &month) || !Expect(text, &pos, '-') ||
      !Digits(text, &pos, 2, &day) || !Expect(text, &pos, 'T', 't') ||
      !Digits(text, &pos, 2, &hour) || !Expect(text, &pos, ':') ||
      !Digits(text, &pos, 2, &minute) || !Expect(text, &pos, ':') ||
      !Digits(text, &pos, 2, &second)) {
    return std::nullopt;
  }
  date::year_month_day ymd{date::year{year}, date::month(static_cast<unsigned>(month)),
                           date::day(static_cast<unsigned>(day))};
  if (!ymd.ok() || hour > 23 || minute > 59 || second > 59) return std::nullopt;
  int millis = 0;
  if (pos < text.size() && text[pos] == '.') {
    ++pos;
    int digits = 0;
    while (pos < text.size() && text[pos] >= '0' && text[pos] <= '9') {
      if (digits == 3) return std::nullopt;  // finer than UnixMs can hold
      millis = millis * 10 + (text[pos] - '0');
      ++digits;
      ++pos;
    }
    if (digits == 0) return std::nullopt;
    while (digits++ < 3) millis *= 10;
  }
  int offset_minutes = 0;
  if (Expect(text, &pos, 'Z', 'z')) {
    offset_minutes = 0;
  } else {
    if (pos >= text.size() || (text[pos] != '+' && text[pos] != '-')) return std::nullopt;
    int sign = text[pos] == '-' ? -1 : 1;
    ++pos;
    int offset_hours, offset_mins;
    if (!Digits(text, &pos, 2, &offset_hours) || !Expect(text, &pos, ':') ||
        !Digits(text, &pos, 2, &offset_mins) || offset_hours > 23 || offset_mins > 59) {
      return std::nullopt;
    }
    offset_minutes = sign * (offset_hours * 60 + offset_mins);
  }
  if (pos != text.size()) return std::nullopt;
  const UnixMs days = date::sys_days(ymd).time_since_epoch().count();
  const UnixMs instant = ((days * 24 + hour) * 60 + minute - offset_minutes) * 60 * kMsPerSecond +
                         second * kMsPerSecond + millis;
  // An offset can carry a time just outside years 0000-9999 ("0000-01-01T00:30:00+01:00"),
  // which no date-time in UTC can state, so no answer could name it back.
  if (instant < kFirstInstant || instant >= kEndInstant) return std::nullopt;
  return instant;
}

std::string FormatLocalRfc3339(const LocalTime& zone, UnixMs instant) {
  const LocalMoment local = zone.At(instant);
  // Local mean time before a zone's first standard time has offsets in seconds (Dublin
  // -00:25:21 until 1916, IANA tz), which RFC 3339 cannot write; and near years 0000 and 9999
  // a local year can leave the four digits. Such instants are written in UTC instead.
  const int year = static_cast<int>(local.date.year());
  if (local.utc_offset_seconds % 60 != 0 || year < 0 || year > 9999) {
    return FormatLocalRfc3339(UtcTime(), instant);
  }
  // Seconds and milliseconds are the same in every zone (offsets are whole minutes).
  const UnixMs within_minute = ((instant % 60000) + 60000) % 60000;
  char text[48];
  int length = std::snprintf(text, sizeof text, "%04d-%02u-%02uT%02d:%02d:%02d",
                             static_cast<int>(local.date.year()),
                             static_cast<unsigned>(local.date.month()),
                             static_cast<unsigned>(local.date.day()), local.minute_of_day / 60,
                             local.minute_of_day % 60, static_cast<int>(within_minute / 1000));
  std::string out(text, length);
  if (within_minute % 1000 != 0) {
    std::snprintf(text, sizeof text, ".%03d", static_cast<int>(within_minute % 1000));
    out += text;
  }
  const int offset = local.utc_offset_seconds / 60;
  if (offset == 0) return out + "Z";
  const int magnitude = offset < 0 ? -offset : offset;
  std::snprintf(text, sizeof text, "%c%02d:%02d", offset < 0 ? '-' : '+', magnitude / 60,
                magnitude % 60);
  return out + text;
}

}  // namespace ampledger
