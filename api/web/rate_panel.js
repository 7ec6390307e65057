// rate_panel.js: "Price right now": the rate period in force, its price and when it changes to
// what (GET /v1/tariff/now), and today's rate periods as a strip with the present marked (GET
// /v1/tariff/periods). A site without a tariff (404) is told so plainly.
import { el, siteFormat } from './dom.js';
import { formatPrice, periodWords, shadesByPrice } from './money.js';
import { rfc3339 } from './site_time.js';

export class RatePanel {
  constructor(api, site) {
    this.api = api;
    this.site = site;
    this.clock = siteFormat(site.zone, { hour: '2-digit', minute: '2-digit', hourCycle: 'h23' });
    this.day = siteFormat(site.zone, { weekday: 'long' });
  }

  // "at 17:00", or "tomorrow at 07:00", or "Saturday at 00:00", in site time.
  whenWords(ms, now) {
    const today = this.site.time.startOfDay(now);
    const tomorrow = this.site.time.addDays(today, 1);
    if (ms < tomorrow) return `at ${this.clock(ms)}`;
    if (ms < this.site.time.addDays(tomorrow, 1)) return `tomorrow at ${this.clock(ms)}`;
    return `${this.day(ms)} at ${this.clock(ms)}`;
  }

  async refresh(now) {
    const host = document.getElementById('rate-now');
    const status = document.getElementById('rate-status');
    let rate = null;
    if (this.site.priced) {
      try {
        rate = await this.api.get('/v1/tariff/now');
      } catch (error) {
        if (!error.absent) throw error;  // absent: the tariff was taken away since the page loaded
      }
    }
    if (rate === null) {
      host.replaceChildren(el('p', { class: 'rate-none' },
        'No tariff is set for this site, so there is no price to show. Energy is still counted in kWh.'));
      document.getElementById('rate-day').replaceChildren();
      status.textContent = '';
      return;
    }
    const until = rate.until === null ? null : Date.parse(rate.until);
    const change = until === null ? 'The price does not change.'
      : rate.next ? `Changes ${this.whenWords(until, now)} to ${periodWords(rate.next.period)}, `
        + `${formatPrice(rate.next.price_per_kwh, rate.currency)}.`
        : `Ends ${this.whenWords(until, now)}.`;
    const cheaper = rate.next && Number(rate.next.price_per_kwh) < Number(rate.price_per_kwh);
    host.replaceChildren(
      el('p', { class: 'rate-period', id: 'rate-period' }, periodWords(rate.period)),
      el('p', { class: 'rate-price', id: 'rate-price' }, formatPrice(rate.price_per_kwh, rate.currency)),
      el('p', { class: 'rate-change', id: 'rate-change' }, change,
        cheaper ? el('span', { class: 'quiet' }, ' Waiting lowers the cost of flexible loads.') : ''),
      el('p', { class: 'quiet' }, `Tariff: ${rate.title || rate.tariff}.`));
    await this.showDay(now, rate.currency);
    status.textContent = '';
  }

  // Today's periods, each with its hours and price; the one in force is marked in words.
  async showDay(now, currency) {
    const from = this.site.time.startOfDay(now);
    const to = this.site.time.addDays(from, 1);
    const { periods } = await this.api.get('/v1/tariff/periods', { from: rfc3339(from), to: rfc3339(to) });
    const shades = shadesByPrice(periods);
    document.getElementById('rate-day').replaceChildren(...periods.map((p) => {
      const start = Date.parse(p.from);
      const end = Date.parse(p.to);
      const current = start <= now && now < end;
      return el('li', { class: current ? 'rate-slot current' : 'rate-slot', 'data-period': p.period },
        el('span', { class: `swatch band-swatch band-${shades[p.period]}`, 'aria-hidden': 'true' }),
        el('span', { class: 'rate-hours' }, `${this.clock(start)}–${end >= to ? '24:00' : this.clock(end)}`),
        el('span', { class: 'rate-name' }, periodWords(p.period), current ? ' (now)' : ''),
        el('span', { class: 'rate-slot-price' }, formatPrice(p.price_per_kwh, currency)));
    }));
  }
}
