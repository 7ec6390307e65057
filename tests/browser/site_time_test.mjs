// The dashboard's site-time arithmetic (api/web/site_time.js) against the IANA tz database:
// tests/reference/data/tz/dst-transitions.csv, made with zdump from the machine's tzdata 2025b
// (its SOURCES.md). Runs in node, whose Intl carries its own copy of the tz rules; the rows
// for 2025-2027 are the same in both.
// Usage: node site_time_test.mjs SOURCE_DIR
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { pathToFileURL } from 'node:url';

const sourceDir = process.argv[2];
const { SiteTime } = await import(pathToFileURL(path.join(sourceDir, 'api/web/site_time.js')));
const csv = readFileSync(path.join(sourceDir, 'tests/reference/data/tz/dst-transitions.csv'), 'utf8');
const [header, ...lines] = csv.trim().split('\n');
const columns = header.split(',');
const rows = lines.map((line) => Object.fromEntries(line.split(',').map((v, i) => [columns[i], v])));

let failures = 0;
function check(condition, what) {
  if (!condition) {
    failures += 1;
    console.log(`FAIL ${what}`);
  }
}

const offsetMs = (text) => (text[0] === '-' ? -1 : 1)
  * (Number(text.slice(1, 3)) * 60 + Number(text.slice(4, 6))) * 60_000;

for (const row of rows) {
  const time = new SiteTime(row.zone);
  const instant = Date.parse(row.utc_instant);
  const what = `${row.zone} ${row.local_date} (${row.kind})`;
  // The offset on each side of the transition (zdump's last second before, first after).
  check(time.offsetAt(instant - 1000) === offsetMs(row.utc_offset_before), `${what}: offset before`);
  check(time.offsetAt(instant) === offsetMs(row.utc_offset_after), `${what}: offset after`);
  // The local day of the transition is 23 or 25 hours long, midnight to midnight.
  const [year, month, day] = row.local_date.split('-').map(Number);
  const midnight = time.instantOf(year, month, day);
  check(time.startOfDay(instant) === midnight, `${what}: start of day`);
  const hours = (time.addDays(midnight, 1) - midnight) / 3_600_000;
  check(hours === Number(row.local_day_hours), `${what}: ${hours} h, expected ${row.local_day_hours}`);
  // The wall-clock reading just after the change: going forward it names the transition
  // instant; going back it is read twice, and means the earlier instant (an hour before).
  const after = row.local_after.match(/T(\d\d):(\d\d)/);
  const expected = row.kind === 'dst_start' ? instant
    : instant + Number(row.clock_change_minutes) * 60_000;
  check(time.instantOf(year, month, day, Number(after[1]), Number(after[2])) === expected,
    `${what}: ${row.local_after} read as ${new Date(expected).toISOString()}`);
  // The reading skipped going forward (half an hour into the gap) means just after the gap.
  if (row.kind === 'dst_start') {
    const before = row.local_before.match(/T(\d\d):(\d\d)/);
    check(time.instantOf(year, month, day, Number(before[1]), 30) === instant + 30 * 60_000,
      `${what}: a skipped reading resolves past the gap`);
  }
  // Local hours around the change are whole hours of real time (hour offsets here).
  check(time.next(time.floor(instant - 1, 'hour'), 'hour') === instant, `${what}: hour step`);
}
console.log(`${rows.length} transitions checked, ${failures} failure(s)`);
process.exit(failures ? 1 : 0);
