// api/rfc3339.cpp
#include "api/rfc3339.h"

#include <chrono>

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
  const int within_minute = static_cast<int>(((instant % 60000) + 60000) % 60000);
  // Written digit by digit: a year of daily points names some 10,000 times, and snprintf's
  // format parsing was an eighth of such a request's CPU (query_scale, issue 9).
  char text[32];
  char* out = text;
  auto digits = [&out](int value, int count) {
    for (int i = count - 1; i >= 0; --i, value /= 10) out[i] = static_cast<char>('0' + value % 10);
    out += count;
  };
  digits(year, 4);
  *out++ = '-';
  digits(static_cast<int>(static_cast<unsigned>(local.date.month())), 2);
  *out++ = '-';
  digits(static_cast<int>(static_cast<unsigned>(local.date.day())), 2);
  *out++ = 'T';
  digits(local.minute_of_day / 60, 2);
  *out++ = ':';
  digits(local.minute_of_day % 60, 2);
  *out++ = ':';
  digits(within_minute / 1000, 2);
  if (within_minute % 1000 != 0) {
    *out++ = '.';
    digits(within_minute % 1000, 3);
  }
  const int offset = local.utc_offset_seconds / 60;
  if (offset == 0) {
    *out++ = 'Z';
  } else {
    const int magnitude = offset < 0 ? -offset : offset;
    *out++ = offset < 0 ? '-' : '+';
    digits(magnitude / 60, 2);
    *out++ = ':';
    digits(magnitude % 60, 2);
  }
  return std::string(text, static_cast<std::size_t>(out - text));
}

}  // namespace ampledger
