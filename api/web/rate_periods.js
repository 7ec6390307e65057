// rate_periods.js: the tariff's rate periods over the history chart's range (GET
// /v1/tariff/periods, which answers ranges of about a month at most) and the energy and cost of
// that range by rate period (GET /v1/energy?by=rate_period), for history_panel.js.
import { el, formatKwh } from './dom.js';
import { DAY, rfc3339 } from './site_time.js';
import { formatMoney, formatPrice, periodWords, shadesByPrice } from './money.js';

const NO_TARIFF = 'No tariff is set for this site, so energy is not priced and no rate periods are shaded.';

// The longest range shaded: what the periods route answers (31 days, so a month of 31 days
// that has a clock change going back is one hour too long; its chart goes unshaded).
export const LONGEST_SHADED = 31 * DAY;

// {bands: [{from, to, shade, label}], shades: {period: shade}, currency, note}. A site without a
// tariff (site.priced false) or a range too long gets no bands and a note saying why.
export async function loadBands(api, site, from, to) {
  if (!site.priced) return { bands: [], shades: {}, note: NO_TARIFF };
  if (to - from > LONGEST_SHADED) {
    return { bands: [], shades: {}, note: 'Rate periods are shaded for ranges up to a month '
      + '(31 days); zoom in to see them.' };
  }
  const answer = await api.get('/v1/tariff/periods', { from: rfc3339(from), to: rfc3339(to) });
  const shades = shadesByPrice(answer.periods);
  const bands = answer.periods.map((p) => ({
    from: Date.parse(p.from), to: Date.parse(p.to), shade: shades[p.period],
    label: `${periodWords(p.period)}, ${formatPrice(p.price_per_kwh, answer.currency)}`,
  }));
  const names = Object.keys(shades).sort((a, b) => shades[a] - shades[b]);
  return { bands, shades, currency: answer.currency, names, periods: answer.periods,
    note: names.length ? '' : 'The tariff has no rate periods in this range.' };
}

// The legend of the shading: one swatch per period name with its price(s).
export function bandLegend(loaded) {
  if (!loaded.names?.length) return [];
  return loaded.names.map((name) => {
    const prices = [...new Set(loaded.periods.filter((p) => p.period === name)
      .map((p) => formatPrice(p.price_per_kwh, loaded.currency)))];
    return el('li', { 'data-period': name },
      el('span', { class: `swatch band-swatch band-${loaded.shades[name]}`, 'aria-hidden': 'true' }),
      el('span', { class: 'legend-label' }, periodWords(name)),
      el('span', { class: 'legend-value' }, prices.join(', ')));
  });
}

// Energy and cost of [from, to) per rate period, as a list with bars: [elements].
export async function rateCosts(api, site, from, to, shades) {
  if (!site.priced) return [el('p', { class: 'quiet' }, NO_TARIFF)];
  const answer = await api.get('/v1/energy', { from: rfc3339(from), to: rfc3339(to), by: 'rate_period' });
  const rows = answer.rows.filter((r) => r.kwh !== 0 || Number(r.cost) !== 0);
  if (rows.length === 0) return [el('p', { class: 'quiet' }, 'No priced energy in this range.')];
  const largest = Math.max(...rows.map((r) => Math.abs(Number(r.cost))), 1e-9);
  const total = rows.reduce((sum, r) => sum + Number(r.cost), 0);
  const totalKwh = rows.reduce((sum, r) => sum + r.kwh, 0);
  return [el('ul', { class: 'rate-costs' }, rows.map((r) => el('li', { 'data-period': r.period },
    el('span', { class: `swatch band-swatch band-${shades[r.period] ?? 1}`, 'aria-hidden': 'true' }),
    el('span', { class: 'rate-name' }, periodWords(r.period)),
    el('span', { class: 'bar', 'aria-hidden': 'true' }, barFill(Math.abs(Number(r.cost)) / largest)),
    el('span', { class: 'rate-kwh' }, formatKwh(r.kwh)),
    el('span', { class: 'rate-cost' }, formatMoney(r.cost, answer.currency)))),
  el('li', { class: 'rate-total' }, el('span', { class: 'rate-name' }, 'All periods'),
    el('span', { class: 'rate-kwh' }, formatKwh(totalKwh)),
    el('span', { class: 'rate-cost' }, formatMoney(total, answer.currency))))];
}

// A bar's fill at `fraction` of its width, set through the CSSOM: the page's
// Content-Security-Policy refuses style attributes.
export function barFill(fraction, kind = 'cost') {
  const fill = el('span', { class: `bar-fill ${kind}` });
  fill.style.width = `${Math.max(0, Math.min(1, fraction)) * 100}%`;
  return fill;
}
