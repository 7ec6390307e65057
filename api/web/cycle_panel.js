// cycle_panel.js: "Cost so far": energy and cost of today (GET /v1/energy from local midnight)
// and of the billing cycle so far, with the whole cycle projected at the pace so far (GET
// /v1/cycles/current). Both are time-of-use energy charges only, as the daemon prices them, and
// the panel says so. A unit token asks for its own unit only. A site without a tariff (the
// routes answer 404) is told so plainly.
import { formatKwh, siteFormat } from './dom.js';
import { formatMoney } from './money.js';
import { rfc3339 } from './site_time.js';

export class CyclePanel {
  constructor(api, site) {
    this.api = api;
    this.site = site;
    this.unit = site.scope === 'unit' ? site.units[0]?.id ?? null : null;
    this.date = siteFormat(site.zone, { day: 'numeric', month: 'short' });
  }

  async refresh(now) {
    const status = document.getElementById('cycle-status');
    let cycle = null;
    if (this.site.priced) {
      try {
        cycle = await this.api.get('/v1/cycles/current', this.unit ? { unit: this.unit } : {});
      } catch (error) {
        if (!error.absent) throw error;  // absent: the tariff was taken away since the page loaded
      }
    }
    if (cycle === null) {
      for (const id of ['cost-today', 'cost-cycle', 'cost-projected']) setText(id, '–');
      status.textContent = 'No tariff is set for this site, so nothing is priced.';
      return;
    }
    const from = Date.parse(cycle.from);
    const to = Date.parse(cycle.to);
    // The cycle's last day is the day before `to` (the next cycle's first day).
    const lastDay = this.site.time.addDays(to, -1);
    setText('cycle-range', `Billing cycle ${this.date(from)} – ${this.date(lastDay)}${
      this.unit ? `, ${this.site.units[0].name || this.unit}` : ''}.`);
    setText('cost-cycle', formatMoney(cycle.cost_so_far, cycle.currency));
    setText('kwh-cycle', formatKwh(cycle.kwh_so_far));
    // No projection before the cycle's first quarter hour has passed.
    setText('cost-projected', cycle.projected_cost === null ? '–' : formatMoney(cycle.projected_cost, cycle.currency));
    setText('kwh-projected', cycle.projected_kwh === null ? '' : `about ${formatKwh(cycle.projected_kwh)}`);
    const elapsed = Math.max(0, Math.min(1, cycle.elapsed_fraction));
    document.getElementById('cycle-elapsed').style.width = `${elapsed * 100}%`;

    const today = await this.today(now);
    setText('cost-today', formatMoney(today.cost, today.currency));
    setText('kwh-today', formatKwh(today.kwh));
    const days = Math.round((to - from) / 86_400_000);
    status.textContent = `${Math.round(elapsed * 100)}% of the cycle's ${days} days has passed; `
      + 'the projection assumes the rest goes like the part so far. These are energy charges '
      + 'only: fixed charges, taxes'
      + `${this.unit ? ' and shares of shared circuits' : ''} appear on the ${this.unit ? 'statement' : 'bill'}.`;
  }

  // Energy drawn today and its cost: {kwh, cost, currency}. Exported energy is not counted as
  // use here (the tiles above show solar apart).
  async today(now) {
    const from = this.site.time.startOfDay(now);
    const to = this.site.time.addDays(from, 1);
    const query = { from: rfc3339(from), to: rfc3339(to) };
    if (this.unit) query.by = 'unit';
    const answer = await this.api.get('/v1/energy', query);
    const rows = answer.rows.filter((r) => (this.unit ? r.unit === this.unit : r.direction !== 'export'));
    return {
      kwh: rows.reduce((sum, r) => sum + r.consumption_kwh, 0),
      cost: rows.reduce((sum, r) => sum + Number(r.cost ?? 0), 0),
      currency: answer.currency,
    };
  }
}

function setText(id, text) {
  document.getElementById(id).textContent = text;
}
