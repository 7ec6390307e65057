// alerts_panel.js: "Needs attention" (the active alerts, each with an acknowledge button) and
// "What happened" (the newest events), from GET /v1/alerts and GET /v1/events (api/ALERTS.md),
// written as sentences rather than tables. Viewer tokens read only: the daemon answers their
// acknowledge with 403, and the panel says which tokens may.
import { el, formatKwh, formatWatts, siteFormat } from './dom.js';

// How many events the list keeps, newest first.
const SHOWN_EVENTS = 25;
// The events route's largest page (api/ALERTS.md: limit 1 to 1000).
const EVENT_PAGE = 1000;

// "water-heater-backup-element" -> "Water heater backup element".
export function ruleWords(rule) {
  const words = rule.replaceAll(/[-_]+/g, ' ').trim();
  return words.charAt(0).toUpperCase() + words.slice(1);
}

function durationWords(seconds) {
  if (seconds < 90) return `${Math.round(seconds)} s`;
  if (seconds < 90 * 60) return `${Math.round(seconds / 60)} min`;
  const hours = Math.floor(seconds / 3600);
  const minutes = Math.round((seconds - hours * 3600) / 60);
  return minutes ? `${hours} h ${minutes} min` : `${hours} h`;
}

export class AlertsPanel {
  constructor(api, site) {
    this.api = api;
    this.site = site;
    this.after = 0;
    this.events = [];  // newest first
    this.when = siteFormat(site.zone, { weekday: 'short', day: 'numeric', month: 'short',
      hour: '2-digit', minute: '2-digit', hourCycle: 'h23' });
    this.clock = siteFormat(site.zone, { hour: '2-digit', minute: '2-digit', hourCycle: 'h23' });
  }

  subjectName(subject) {
    if (subject.type === 'circuit') {
      const circuit = this.site.circuits.find((c) => c.id === subject.id);
      return circuit?.name || subject.id;
    }
    if (subject.type === 'unit') {
      const unit = this.site.units.find((u) => u.id === subject.id);
      return unit?.name || subject.id;
    }
    return `sensor node ${subject.id}`;
  }

  // What an event says, in a sentence: {headline, detail}.
  describe(event) {
    const v = event.values || {};
    const who = this.subjectName(event.subject);
    const level = v.level_watts !== undefined ? `, level ${formatWatts(v.level_watts)}` : '';
    switch (event.kind) {
      case 'raised':
      case 'changed': {
        const measured = v.watts !== undefined ? ` at ${formatWatts(v.watts)}${level}` : '';
        const held = v.held_s !== undefined ? ` for ${durationWords(v.held_s)}` : '';
        return { headline: `${who}: ${event.reason || 'condition met'}`,
          detail: `${event.kind === 'changed' ? 'Got worse' : 'Started'}${measured}${held}.` };
      }
      case 'cleared':
        return { headline: `${who}: back to normal`, detail: event.reason ? `${event.reason}.` : '' };
      case 'cycle_finished': {
        const parts = [];
        if (v.start !== undefined) parts.push(`ran from ${this.clock(v.start)}`);
        if (v.duration_s !== undefined) parts.push(`for ${durationWords(v.duration_s)}`);
        if (v.energy_wh !== undefined) parts.push(`used ${formatKwh(v.energy_wh / 1000)}`);
        if (v.peak_watts !== undefined) parts.push(`peak ${formatWatts(v.peak_watts)}`);
        return { headline: `${who} finished a run`, detail: parts.length ? `It ${parts.join(', ')}.` : '' };
      }
      case 'silent':
        return { headline: `${who} stopped reporting`,
          detail: v.last_heard !== undefined ? `Last heard ${this.when(v.last_heard)}.` : '' };
      case 'back':
        return { headline: `${who} reports again`, detail: '' };
      case 'acknowledged':
        return { headline: `${who}: acknowledged`, detail: event.by ? `By ${event.by}.` : '' };
      case 'silenced':
        return { headline: `${who}: ${v.until ? 'notifications paused' : 'notifications resumed'}`,
          detail: v.until ? `No webhook calls until ${this.when(v.until)}.` : '' };
      default:
        return { headline: `${who}: ${event.kind.replaceAll('_', ' ')}`, detail: event.reason || '' };
    }
  }

  // Redraws only when the alerts changed, so a button is not replaced under a finger and a
  // note below an alert stays.
  async refreshAlerts() {
    const { alerts } = await this.api.get('/v1/alerts');
    const seen = JSON.stringify(alerts);
    if (seen === this.shownAlerts) return;
    this.shownAlerts = seen;
    const host = document.getElementById('alert-list');
    const status = document.getElementById('alerts-status');
    if (alerts.length === 0) {
      host.replaceChildren();
      status.textContent = 'Nothing needs attention.';
      return;
    }
    status.textContent = `${alerts.length} active; the newest condition of each is shown.`;
    host.replaceChildren(...alerts.map((alert) => this.alertItem(alert)));
  }

  alertItem(alert) {
    const { headline, detail } = alert.condition ? this.describe(alert.condition)
      : { headline: this.subjectName(alert.subject), detail: '' };
    const key = `${alert.rule}/${alert.subject.type}/${alert.subject.id}`;
    const note = el('p', { class: 'alert-note', role: 'status' });
    const acknowledged = alert.acknowledged
      ? `Acknowledged ${alert.acknowledged_ms ? this.when(alert.acknowledged_ms) : ''}${
        alert.acknowledged_by ? ` by ${alert.acknowledged_by}` : ''}.` : '';
    const button = alert.acknowledged ? null : el('button', { type: 'button', class: 'acknowledge',
      onclick: () => this.acknowledge(alert, button, note) }, 'Acknowledge');
    return el('li', { class: alert.acknowledged ? 'alert seen' : 'alert', 'data-alert': key },
      el('span', { class: 'alert-mark', 'aria-hidden': 'true' }, alert.acknowledged ? '✓' : '!'),
      el('div', { class: 'alert-body' },
        el('p', { class: 'alert-rule' }, ruleWords(alert.rule)),
        el('p', { class: 'alert-headline' }, headline),
        el('p', { class: 'quiet' }, [
          alert.raised_ms ? `Since ${this.when(alert.raised_ms)}. ` : '', detail, ' ', acknowledged,
          alert.silenced_until_ms ? ` Notifications paused until ${this.when(alert.silenced_until_ms)}.` : '',
        ].join('').trim()),
        note),
      button);
  }

  async acknowledge(alert, button, note) {
    button.disabled = true;
    const path = ['/v1/alerts', alert.rule, alert.subject.type, alert.subject.id, 'acknowledge']
      .map((part, k) => (k === 0 ? part : encodeURIComponent(part))).join('/');
    try {
      await this.api.post(path, {});
      await Promise.all([this.refreshAlerts(), this.refreshEvents()]);
    } catch (error) {
      button.disabled = false;
      note.textContent = error.forbidden
        ? 'This token may only read. An admin token, or the unit\'s own token, may acknowledge.'
        : error.absent ? 'This alert has already ended.' : `Not acknowledged: ${error.message}`;
      note.classList.add('problem');
    }
  }

  // Reads every event after the last one seen (the first time, all of them, page by page), and
  // keeps the newest. Calls queue behind each other, so no event is read twice.
  refreshEvents() {
    const run = (this.reading ?? Promise.resolve()).catch(() => {}).then(() => this.readEvents());
    this.reading = run;
    return run;
  }

  async readEvents() {
    for (;;) {
      const answer = await this.api.get('/v1/events', { after: String(this.after), limit: String(EVENT_PAGE) });
      this.events = [...answer.events.reverse(), ...this.events].slice(0, SHOWN_EVENTS);
      const moved = answer.next_after !== this.after;
      this.after = answer.next_after;
      if (answer.events.length < EVENT_PAGE || !moved) break;
    }
    const host = document.getElementById('event-list');
    document.getElementById('events-status').textContent = this.events.length === 0
      ? 'Nothing has happened yet.' : `The newest ${this.events.length}, newest first.`;
    host.replaceChildren(...this.events.map((event) => {
      const { headline, detail } = this.describe(event);
      return el('li', { class: `event event-${event.kind}`, 'data-event': event.id },
        el('time', { datetime: event.at }, this.when(event.at_ms)),
        el('span', { class: 'event-text' }, el('strong', {}, headline), detail ? ` ${detail}` : '',
          el('span', { class: 'quiet' }, ` · ${ruleWords(event.rule)}`)));
    }));
  }
}
