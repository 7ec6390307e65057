// history_panel.js: the stacked history chart, by unit or by circuit, over a range from a few
// hours to a year. The step follows the range (site_time.js stepForRange), and every range is
// moved onto the step's boundaries in the site's zone, as the series routes require. The
// tariff's rate periods are shaded behind ranges of up to a month (rate_periods.js), and the
// range's cost is split by rate period below the chart.
import { el, siteFormat } from './dom.js';
import { bandLegend, loadBands, rateCosts } from './rate_periods.js';
import { DAY, rfc3339, stepForRange } from './site_time.js';
import { StackChart } from './stack_chart.js';

const HOUR = 3600_000;
// Export (solar) is always orange, as on the tiles; consumption takes the palette's other
// colours in turn, then the same colours striped.
const USE_COLOURS = [0, 2, 3, 4, 5, 6];
function colourFor(direction, k) {
  if (direction === 'export') return { colour: 1, hatch: 0 };
  return { colour: USE_COLOURS[k % USE_COLOURS.length], hatch: Math.floor(k / USE_COLOURS.length) % 3 };
}

const STEP_WORDS = { '15m': 'per quarter hour', hour: 'per hour', day: 'per day', month: 'per month' };

export class HistoryPanel {
  constructor(api, site) {
    this.api = api;
    this.site = site;
    this.generation = 0;
    this.chart = new StackChart(document.getElementById('chart'), (a, b) => this.show(a, b));
    this.stackBy = site.scope === 'site' && site.units.length > 0 ? 'unit' : 'circuit';
    this.presets = [
      { label: '6 h', range: (now) => [now - 6 * HOUR, now] },
      { label: 'Day', range: (now) => this.dayRange(now, 1) },
      { label: 'Week', range: (now) => this.dayRange(now, 7) },
      { label: 'Month', range: (now) => this.dayRange(now, 31) },
      { label: 'Year', range: (now) => {
        const to = site.time.addMonths(site.time.startOfMonth(now), 1);
        return [site.time.addMonths(to, -12), to];
      } },
    ];
    this.buildControls();
  }

  buildControls() {
    const stackBy = document.getElementById('stack-by');
    const choices = this.site.scope === 'site' && this.site.units.length > 0
      ? [['unit', 'By unit'], ['circuit', 'By circuit']] : [['circuit', 'By circuit']];
    stackBy.hidden = choices.length < 2;
    stackBy.replaceChildren(...choices.map(([value, label]) => el('button', {
      type: 'button', 'data-value': value, 'aria-pressed': String(value === this.stackBy),
      onclick: (click) => {
        this.stackBy = value;
        for (const b of stackBy.children) b.setAttribute('aria-pressed', String(b === click.currentTarget));
        this.show(this.from, this.to);
      },
    }, label)));
    const presets = document.getElementById('range-presets');
    this.presetButtons = this.presets.map((preset) => el('button', {
      type: 'button', 'aria-pressed': 'false', onclick: () => this.show(...preset.range(Date.now())),
    }, preset.label));
    presets.replaceChildren(...this.presetButtons);
    document.getElementById('range-back').addEventListener('click', () => this.shift(-1));
    document.getElementById('range-forward').addEventListener('click', () => this.shift(1));
    document.getElementById('range-out').addEventListener('click', () => {
      const span = this.to - this.from;
      this.show(this.from - span / 2, Math.min(this.to + span / 2, this.site.time.addDays(
        this.site.time.startOfDay(Date.now()), 1)));
    });
  }

  // `days` whole local days ending with today.
  dayRange(now, days) {
    const to = this.site.time.addDays(this.site.time.startOfDay(now), 1);
    return [this.site.time.addDays(to, -days), to];
  }

  // [a, b) widened to the boundaries of the step its length calls for: [from, to, step].
  aligned(a, b) {
    const step = stepForRange(Math.max(b - a, HOUR));
    const from = this.site.time.floor(a, step);
    return [from, Math.max(this.site.time.ceil(b, step), this.site.time.next(from, step)), step];
  }

  shift(direction) {
    const span = this.to - this.from;
    this.show(this.from + direction * span, this.to + direction * span);
  }

  // Subjects for the chart: units and the circuits no unit owns, or every circuit.
  subjects() {
    const { circuits, units } = this.site;
    const path = (kind, id) => `/v1/${kind}/${encodeURIComponent(id)}/series`;
    if (this.stackBy === 'unit') {
      return [
        ...units.map((u) => ({ label: u.name || u.id, path: path('units', u.id), direction: 'consumption' })),
        ...circuits.filter((c) => c.unit === null).map((c) => ({
          label: c.name || c.id, path: path('circuits', c.id), direction: c.direction })),
      ];
    }
    return circuits.map((c) => ({ label: c.name || c.id, path: path('circuits', c.id),
      direction: c.direction }));
  }

  async show(a, b) {
    const [from, to, step] = this.aligned(a, b);
    this.presets.forEach((preset, i) => {
      const [presetFrom, presetTo] = this.aligned(...preset.range(Date.now()));
      this.presetButtons[i].setAttribute('aria-pressed', String(presetFrom === from && presetTo === to));
    });
    this.from = from;
    this.to = to;
    const generation = ++this.generation;
    const format = siteFormat(this.site.zone, step === 'month' ? { month: 'short', year: 'numeric' }
      : { day: 'numeric', month: 'short', year: 'numeric',
        ...(step === '15m' || step === 'hour' ? { hour: '2-digit', minute: '2-digit', hourCycle: 'h23' } : {}) });
    const last = step === 'month' ? this.site.time.addMonths(to, -1)
      : step === 'day' ? this.site.time.addDays(to, -1) : to;
    document.getElementById('range-label').textContent =
      `${format(from)} – ${format(last)}, ${STEP_WORDS[step]}`;
    document.getElementById('range-forward').disabled = to > Date.now();
    const status = document.getElementById('history-status');
    status.textContent = 'Loading…';
    const query = { from: rfc3339(from), to: rfc3339(to), step };
    const subjects = this.subjects();
    const bandsLoaded = loadBands(this.api, this.site, from, to).catch((error) => ({ bands: [],
      note: `Rate periods could not be loaded: ${error.message}` }));
    this.showRateCosts(from, to, bandsLoaded, generation);
    let answers;
    let bands;
    try {
      [answers, bands] = await Promise.all([
        Promise.all(subjects.map((s) => this.api.get(s.path, query))), bandsLoaded]);
    } catch (error) {
      if (generation === this.generation) status.textContent = `Could not load history: ${error.message}`;
      return;
    }
    if (generation !== this.generation) return;  // a newer range was asked for meanwhile
    let used = 0;
    const series = subjects.map((subject, index) => ({
      label: subject.label,
      direction: subject.direction,
      ...colourFor(subject.direction, subject.direction === 'export' ? 0 : used++),
      points: answers[index].points.map((p) => ({
        start: Date.parse(p.start), end: Date.parse(p.end), watts: p.mean_w, wh: p.energy_wh,
        hasData: p.quality !== null,
      })),
    }));
    this.chart.draw({ from, to, step, zone: this.site.zone, series, bands: bands.bands });
    document.getElementById('band-legend').replaceChildren(...bandLegend(bands));
    document.getElementById('band-note').textContent = bands.note;
    const covered = series.flatMap((s) => s.points).filter((p) => p.hasData).length;
    status.textContent = covered === 0 ? '' : `Times are site time (${this.site.zone}).`;
  }

  // Energy and cost of the range by rate period, under the chart.
  async showRateCosts(from, to, bandsLoaded, generation) {
    const host = document.getElementById('rate-costs');
    let shown;
    try {
      const { shades = {} } = await bandsLoaded;
      shown = await rateCosts(this.api, this.site, from, to, shades);
    } catch (error) {
      shown = [el('p', { class: 'quiet' }, `Cost by rate period could not be loaded: ${error.message}`)];
    }
    if (generation === this.generation) host.replaceChildren(...shown);
  }

  // Reloads the current range if it reaches the present (new readings may have arrived).
  refresh() {
    if (this.to > Date.now() - DAY) this.show(this.from, this.to);
  }

  start() {
    this.show(...this.presets[1].range(Date.now()));
  }
}
