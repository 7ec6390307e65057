// site_time.js: wall-clock arithmetic in the site's IANA time zone (not the browser's), using
// the browser's Intl time-zone data. The daemon's series routes take `from`/`to` on a boundary
// of the step in the site's zone (local hours, days, months); these functions find them.

const MINUTE = 60_000;
const HOUR = 60 * MINUTE;
const QUARTER = 15 * MINUTE;
export const DAY = 24 * HOUR;

export class SiteTime {
  constructor(zone) {
    this.zone = zone;
    this.parts = new Intl.DateTimeFormat('en-US', {
      timeZone: zone, hourCycle: 'h23', year: 'numeric', month: 'numeric', day: 'numeric',
      hour: 'numeric', minute: 'numeric', second: 'numeric',
    });
  }

  // The wall clock at instant `ms`: {year, month (1-12), day, hour, minute, second}.
  wallClock(ms) {
    const out = {};
    for (const part of this.parts.formatToParts(new Date(ms))) {
      if (part.type !== 'literal') out[part.type] = Number(part.value);
    }
    return out;
  }

  // The zone's offset from UTC at instant `ms`, in ms.
  offsetAt(ms) {
    const w = this.wallClock(ms);
    const asUtc = Date.UTC(w.year, w.month - 1, w.day, w.hour, w.minute, w.second);
    return asUtc - (ms - (((ms % 1000) + 1000) % 1000));
  }

  // The instant the wall clock reads year-month-day hour:minute (month may overflow, as in
  // Date.UTC). A reading that happens twice (clocks going back) is its earlier instant; one
  // skipped by clocks going forward is the instant just after the gap.
  instantOf(year, month, day, hour = 0, minute = 0) {
    const asUtc = Date.UTC(year, month - 1, day, hour, minute);
    // The offsets in force a day either side cover any single change near the reading.
    const candidates = [this.offsetAt(asUtc - DAY), this.offsetAt(asUtc + DAY)]
      .map((offset) => ({ instant: asUtc - offset, offset }));
    const valid = candidates.filter((c) => this.offsetAt(c.instant) === c.offset);
    if (valid.length > 0) return Math.min(...valid.map((c) => c.instant));
    return Math.max(...candidates.map((c) => c.instant));
  }

  startOfDay(ms) {
    const w = this.wallClock(ms);
    return this.instantOf(w.year, w.month, w.day);
  }

  addDays(dayStart, days) {
    const w = this.wallClock(dayStart);
    return this.instantOf(w.year, w.month, w.day + days);
  }

  startOfMonth(ms) {
    const w = this.wallClock(ms);
    return this.instantOf(w.year, w.month, 1);
  }

  addMonths(monthStart, months) {
    const w = this.wallClock(monthStart);
    return this.instantOf(w.year, w.month + months, 1);
  }

  // The start of the period of `step` ('15m', 'hour', 'day', 'month') holding `ms`.
  floor(ms, step) {
    switch (step) {
      case '15m': return Math.floor(ms / QUARTER) * QUARTER;
      case 'hour': {
        const w = this.wallClock(ms);
        return ms - (((ms % 1000) + 1000) % 1000) - (w.minute * 60 + w.second) * 1000;
      }
      case 'day': return this.startOfDay(ms);
      case 'month': return this.startOfMonth(ms);
    }
    throw new Error(`unknown step ${step}`);
  }

  // The start of the period after the one starting at `start`.
  next(start, step) {
    switch (step) {
      case '15m': return start + QUARTER;
      case 'hour': return start + HOUR;
      case 'day': return this.addDays(start, 1);
      case 'month': return this.addMonths(start, 1);
    }
    throw new Error(`unknown step ${step}`);
  }

  ceil(ms, step) {
    const start = this.floor(ms, step);
    return start === ms ? ms : this.next(start, step);
  }
}

// The step that gives a readable number of points for a range: quarter hours up to two days,
// hours up to about two weeks, days up to about half a year, then months.
export function stepForRange(ms) {
  if (ms <= 2 * DAY) return '15m';
  if (ms <= 16 * DAY) return 'hour';
  if (ms <= 190 * DAY) return 'day';
  return 'month';
}

// RFC 3339 in UTC, as the API accepts it ("2026-03-08T06:00:00Z").
export function rfc3339(ms) {
  return new Date(ms).toISOString().replace('.000Z', 'Z');
}
