// stack_chart.js: a stacked step chart in hand-written SVG. Each series is a list of periods
// with mean power; consumption stacks upward from zero, export (solar) downward, so the two are
// never added together. Each series names a colour of the page's palette (dashboard.css,
// --series-N) and a hatch (0 none, 1 or 2 stripes), so series beyond the palette's seven are
// still told apart. The chart is drawn at the width it is shown at, so its text stays readable
// on a phone.
// Rate periods (view.bands) are shaded behind the areas in grey tints of their own, each named
// in the band legend, so the shading needs no colour vision either.
// Dragging across the plot asks for that range (onZoom); moving over it reads out a period.
import { el, svg, formatKwh, formatWatts, formatWh, siteFormat } from './dom.js';

const MARGIN = { left: 58, right: 12, top: 12, bottom: 30 };
const STRIDES = {
  '15m': [4, 8, 16, 24, 48, 96],
  hour: [1, 2, 3, 6, 12, 24, 48, 96],
  day: [1, 2, 7, 14, 28, 56],
  month: [1, 2, 3, 6, 12],
};

export class StackChart {
  // `host` receives the chart; onZoom(fromMs, toMs) is called after a drag.
  constructor(host, onZoom) {
    this.host = host;
    this.onZoom = onZoom;
    this.readout = el('p', { class: 'chart-readout', 'aria-live': 'polite' });
    this.legend = el('ul', { class: 'chart-legend' });
    this.frame = el('div', { class: 'chart-frame' });
    host.replaceChildren(this.frame, this.readout, this.legend);
    let pending = null;
    window.addEventListener('resize', () => {
      clearTimeout(pending);
      pending = setTimeout(() => this.view && this.draw(this.view), 200);
    });
  }

  // view: {from, to, step, zone, series: [{label, direction, colour, hatch, points: [{start,
  // end, watts, wh, hasData}]}], bands: [{from, to, shade (0-3), label}] or absent}; every
  // series has the same periods.
  draw(view) {
    this.view = view;
    const width = Math.max(320, Math.round(this.frame.clientWidth || 860));
    const height = width < 600 ? 240 : 300;
    this.width = width;
    this.maxTicks = width < 600 ? 4 : 7;
    const periods = view.series[0]?.points ?? [];
    const imports = view.series.filter((s) => s.direction !== 'export');
    const exports = view.series.filter((s) => s.direction === 'export');
    const top = Math.max(1, ...periods.map((_, k) => sum(imports, k)));
    const bottom = Math.max(0, ...periods.map((_, k) => sum(exports, k)));
    const yTicks = niceTicks(-bottom, top);
    const low = Math.min(...yTicks);
    const high = Math.max(...yTicks);
    const plotWidth = width - MARGIN.left - MARGIN.right;
    const plotHeight = height - MARGIN.top - MARGIN.bottom;
    this.x = (ms) => MARGIN.left + ((ms - view.from) / (view.to - view.from)) * plotWidth;
    this.xToMs = (x) => view.from + ((x - MARGIN.left) / plotWidth) * (view.to - view.from);
    const y = (watts) => MARGIN.top + ((high - watts) / (high - low)) * plotHeight;

    const root = svg('svg', {
      viewBox: `0 0 ${width} ${height}`, class: 'stack-chart', role: 'img',
      'aria-label': `average power per ${view.step === '15m' ? 'quarter hour' : view.step}`,
    });
    const defs = svg('defs');
    root.append(defs);
    this.drawBands(root, view.bands ?? [], height);
    for (const tick of yTicks) {
      root.append(svg('line', { class: tick === 0 ? 'axis-zero' : 'grid', x1: MARGIN.left,
        x2: width - MARGIN.right, y1: y(tick), y2: y(tick) }));
      root.append(svg('text', { class: 'tick', x: MARGIN.left - 6, y: y(tick) + 4,
        'text-anchor': 'end' }, formatWatts(tick)));
    }
    this.drawTimeTicks(root, periods, y(low));

    let pointCount = 0;
    const stackUp = new Array(periods.length).fill(0);
    const stackDown = new Array(periods.length).fill(0);
    for (const series of view.series) {
      const base = series.direction === 'export' ? stackDown : stackUp;
      const sign = series.direction === 'export' ? -1 : 1;
      const upper = [];
      const lower = [];
      series.points.forEach((point, k) => {
        const from = base[k];
        base[k] += point.watts;
        lower.push([this.x(point.start), y(sign * from)], [this.x(point.end), y(sign * from)]);
        upper.push([this.x(point.start), y(sign * base[k])], [this.x(point.end), y(sign * base[k])]);
        if (point.hasData) pointCount += 1;
      });
      const fill = fillFor(defs, series);
      const outline = [...upper, ...lower.reverse()];
      root.append(svg('path', { class: fill ? 'area' : `area series-${series.colour}`,
        fill, 'data-series': series.label,
        d: `M${outline.map(([px, py]) => `${px.toFixed(1)},${py.toFixed(1)}`).join('L')}Z` }));
    }
    root.dataset.points = String(pointCount);
    root.dataset.step = view.step;
    root.dataset.from = String(view.from);
    root.dataset.to = String(view.to);

    this.guide = svg('line', { class: 'guide', y1: MARGIN.top, y2: height - MARGIN.bottom,
      visibility: 'hidden' });
    this.selection = svg('rect', { class: 'selection', y: MARGIN.top, height: plotHeight,
      width: 0, visibility: 'hidden' });
    root.append(this.guide, this.selection);
    this.listen(root);
    this.frame.replaceChildren(root);
    this.drawLegend(view);
    this.readout.textContent = pointCount === 0
      ? 'No readings stored in this range.'
      : 'Move over the chart to read a period; drag across it to zoom in.';
  }

  // Rate periods as tinted columns behind everything, clipped to the plot.
  drawBands(root, bands, height) {
    let drawn = 0;
    for (const band of bands) {
      const x1 = Math.max(MARGIN.left, this.x(band.from));
      const x2 = Math.min(this.width - MARGIN.right, this.x(band.to));
      if (x2 <= x1) continue;
      root.append(svg('rect', { class: `band band-${band.shade}`, x: x1, width: x2 - x1,
        y: MARGIN.top, height: height - MARGIN.top - MARGIN.bottom, 'data-period': band.label },
      svg('title', {}, band.label)));
      drawn += 1;
    }
    root.dataset.bands = String(drawn);
  }

  drawTimeTicks(root, periods, baseline) {
    const n = periods.length;
    const stride = STRIDES[this.view.step].find((s) => n / s <= this.maxTicks)
      ?? Math.ceil(n / this.maxTicks);
    const hourly = this.view.step === '15m' || this.view.step === 'hour';
    const spansDays = (this.view.to - this.view.from) > 36 * 3600_000;
    const label = siteFormat(this.view.zone, this.view.step === 'month'
      ? { month: 'short', year: 'numeric' }
      : hourly && !spansDays ? { hour: '2-digit', minute: '2-digit', hourCycle: 'h23' }
        : { day: 'numeric', month: 'short' });
    for (let k = 0; k < n; k += stride) {
      const px = this.x(periods[k].start);
      root.append(svg('line', { class: 'tick-mark', x1: px, x2: px, y1: baseline,
        y2: baseline + 5 }));
      root.append(svg('text', { class: 'tick', x: px, y: baseline + 18, 'text-anchor': 'middle' },
        label(periods[k].start)));
    }
  }

  drawLegend(view) {
    const items = view.series.map((series) => {
      const kwh = series.points.reduce((total, p) => total + p.wh, 0) / 1000;
      return el('li', {},
        el('span', { class: `swatch series-${series.colour}${series.hatch ? ` hatch-${series.hatch}` : ''}`,
          'aria-hidden': 'true' }),
        el('span', { class: 'legend-label' }, series.label,
          series.direction === 'export' ? ' (export)' : ''),
        el('span', { class: 'legend-value' }, formatKwh(kwh)));
    });
    this.legend.replaceChildren(...items);
  }

  listen(root) {
    let dragFrom = null;
    const toSvgX = (event) => {
      const box = root.getBoundingClientRect();
      return ((event.clientX - box.left) / box.width) * this.width;
    };
    const clampX = (px) => Math.min(this.width - MARGIN.right, Math.max(MARGIN.left, px));
    root.addEventListener('pointerdown', (event) => {
      dragFrom = clampX(toSvgX(event));
      root.setPointerCapture(event.pointerId);
    });
    root.addEventListener('pointermove', (event) => {
      const px = clampX(toSvgX(event));
      this.showPeriod(px);
      if (dragFrom === null) return;
      this.selection.setAttribute('x', Math.min(dragFrom, px));
      this.selection.setAttribute('width', Math.abs(px - dragFrom));
      this.selection.setAttribute('visibility', 'visible');
    });
    const finish = (event) => {
      if (dragFrom === null) return;
      const px = clampX(toSvgX(event));
      const [a, b] = [Math.min(dragFrom, px), Math.max(dragFrom, px)];
      dragFrom = null;
      this.selection.setAttribute('visibility', 'hidden');
      if (b - a >= 8) this.onZoom(this.xToMs(a), this.xToMs(b));
    };
    root.addEventListener('pointerup', finish);
    root.addEventListener('pointercancel', () => {
      dragFrom = null;
      this.selection.setAttribute('visibility', 'hidden');
    });
  }

  // Reads out the period under x: its time and each series' energy.
  showPeriod(px) {
    const ms = this.xToMs(px);
    const points = this.view.series[0]?.points ?? [];
    const k = points.findIndex((p) => p.start <= ms && ms < p.end);
    if (k < 0) return;
    this.guide.setAttribute('x1', px);
    this.guide.setAttribute('x2', px);
    this.guide.setAttribute('visibility', 'visible');
    const when = siteFormat(this.view.zone, this.view.step === 'month'
      ? { month: 'long', year: 'numeric' }
      : this.view.step === 'day' ? { weekday: 'short', day: 'numeric', month: 'short' }
        : { weekday: 'short', day: 'numeric', month: 'short', hour: '2-digit',
          minute: '2-digit', hourCycle: 'h23' });
    const parts = this.view.series
      .filter((s) => s.points[k].wh !== 0)
      .map((s) => `${s.label} ${formatWh(s.points[k].wh)}`);
    const band = (this.view.bands ?? []).find((b) => b.from <= ms && ms < b.to);
    this.readout.textContent = `${when(points[k].start)}: ${
      parts.length ? parts.join(' · ') : 'nothing measured'}${band ? ` (rate: ${band.label})` : ''}`;
  }
}

function sum(seriesList, k) {
  return seriesList.reduce((total, s) => total + (s.points[k]?.watts ?? 0), 0);
}

// Ticks at 1, 2 or 5 times a power of ten covering [low, high], always including zero.
function niceTicks(low, high) {
  const span = high - low;
  const raw = span / 4;
  const power = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 5, 10].map((m) => m * power).find((s) => s >= raw);
  const ticks = [];
  for (let t = Math.floor(low / step) * step; t <= high + step * 0.999; t += step) {
    ticks.push(Math.round(t * 1e6) / 1e6);
  }
  return ticks;
}

// null (the class's solid colour) without a hatch; else a pattern of the colour and stripes.
function fillFor(defs, { colour, hatch }) {
  if (!hatch) return null;
  const id = `hatch-${colour}-${hatch}`;
  const pattern = svg('pattern', { id, patternUnits: 'userSpaceOnUse', width: 6, height: 6,
    patternTransform: `rotate(${hatch === 1 ? 45 : -45})` },
  svg('rect', { class: `series-${colour}`, width: 6, height: 6 }),
  svg('line', { class: 'hatch-line', x1: 0, y1: 0, x2: 0, y2: 6 }));
  defs.append(pattern);
  return `url(#${id})`;
}
