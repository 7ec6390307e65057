// statement_panel.js: a unit token's statement for a billing cycle it chooses (GET
// /v1/units/{id}/statements/{cycle}, cycles named "YYYY-MM" by the month they start in), as a
// table with the daemon's tenant-billing notice. "Print" prints the statement alone
// (dashboard.css, @media print). Amounts are the daemon's exact decimal strings.
import { el, formatKwh } from './dom.js';
import { formatMoney, formatPrice } from './money.js';

// How many cycles the chooser offers: the current one and the eleven before it.
const CYCLES_OFFERED = 12;

const SECTION_WORDS = { own: 'Own circuits', shared: 'Shared circuits', remainder: 'Not submetered',
  common: 'Common charges' };

// "2026-11" and k -> "2026-(11-k)", across years.
export function cycleBefore(name, k) {
  const [year, month] = name.split('-').map(Number);
  const index = year * 12 + (month - 1) - k;
  return `${String(Math.floor(index / 12)).padStart(4, '0')}-${String((index % 12) + 1).padStart(2, '0')}`;
}

export class StatementPanel {
  constructor(api, site) {
    this.api = api;
    this.site = site;
    this.unit = site.units[0];
    this.select = document.getElementById('statement-cycle');
    this.generation = 0;
  }

  async start() {
    document.body.classList.add('statement-page');
    document.getElementById('statement-print').addEventListener('click', () => window.print());
    const current = await this.api.get('/v1/cycles/current', { unit: this.unit.id });
    const month = new Intl.DateTimeFormat(undefined, { month: 'long', year: 'numeric', timeZone: 'UTC' });
    this.select.replaceChildren(...Array.from({ length: CYCLES_OFFERED }, (_, k) => {
      const name = cycleBefore(current.cycle, k);
      const [year, m] = name.split('-').map(Number);
      return el('option', { value: name }, `Starting in ${month.format(Date.UTC(year, m - 1, 15))}${
        k === 0 ? ' (in progress)' : ''}`);
    }));
    this.select.addEventListener('change', () => this.show(this.select.value));
    await this.show(current.cycle);
  }

  async show(cycle) {
    const generation = ++this.generation;
    const status = document.getElementById('statement-status');
    const body = document.getElementById('statement-body');
    status.textContent = 'Loading…';
    let statement;
    try {
      statement = await this.api.get(`/v1/units/${encodeURIComponent(this.unit.id)}/statements/${cycle}`);
    } catch (error) {
      if (generation !== this.generation) return;
      body.replaceChildren();
      status.textContent = error.absent ? `No statement for this cycle: ${error.message}`
        : `Could not load the statement: ${error.message}`;
      return;
    }
    if (generation !== this.generation) return;
    body.replaceChildren(...this.render(statement));
    status.textContent = '';
  }

  render(s) {
    const money = (amount) => formatMoney(amount, s.currency);
    const rows = s.lines.map((line) => el('tr', { class: `line-${line.section}` },
      el('td', {}, line.description, el('span', { class: 'quiet' }, ` · ${SECTION_WORDS[line.section] ?? line.section}`)),
      el('td', {}, line.method),
      el('td', { class: 'number' }, line.unit === 'kWh' ? formatKwh(line.quantity) : `${line.quantity} ${line.unit}`),
      el('td', { class: 'number' }, line.unit_price === null ? '' : line.unit === 'kWh'
        ? formatPrice(line.unit_price, s.currency) : money(line.unit_price)),
      el('td', { class: 'number' }, money(line.amount))));
    const facts = [
      `Own circuits ${formatKwh(s.own_kwh)}, share of shared circuits ${formatKwh(s.shared_kwh)}.`,
      `Readings cover ${(s.site_bill.coverage * 100).toFixed(1)}% of the cycle; `
        + `${(s.site_bill.estimated_fraction * 100).toFixed(1)}% of the energy is estimated.`,
      s.main_meter.submetered_ratio !== null
        ? `Submetered ${formatKwh(s.main_meter.submetered_kwh)} of the main meter's `
          + `${formatKwh(s.main_meter.kwh)} (${(s.main_meter.submetered_ratio * 100).toFixed(1)}%).`
        : s.main_meter.basis ? `Main meter: ${s.main_meter.basis}.` : '',
    ].filter(Boolean);
    return [
      el('p', { class: 'statement-head' }, el('strong', {}, `${s.unit.name || s.unit.id}`),
        ` · ${s.site} · cycle ${s.cycle.first_day} to ${s.cycle.next_first_day} (not included)`),
      ...s.tariffs.map((t) => el('p', { class: 'quiet' },
        `Tariff ${t.title || t.name}, ${t.first_day} to ${t.last_day}.`)),
      el('div', { class: 'table-scroll' }, el('table', { class: 'statement-table' },
        el('thead', {}, el('tr', {}, ['What', 'How shared', 'Quantity', 'Price', 'Amount'].map((h, k) =>
          el('th', { scope: 'col', class: k >= 2 ? 'number' : null }, h)))),
        el('tbody', {}, rows),
        el('tfoot', {}, el('tr', {}, el('td', { colspan: 4 }, 'Total'),
          el('td', { class: 'number', id: 'statement-total' }, money(s.total)))))),
      el('ul', { class: 'statement-facts' }, facts.map((f) => el('li', {}, f))),
      el('p', { class: 'notice', role: 'note' }, s.notice),
    ];
  }
}
