// nodes_panel.js: sensor node health from GET /v1/nodes (admin and viewer tokens): when each
// node was last heard from, and what the daemon refused from it and why.
import { el, formatAge } from './dom.js';

// A node is "quiet" after this many reporting intervals without a datagram (common practice:
// a few missed intervals, so one lost datagram does not raise a flag).
const QUIET_INTERVALS = 3;

export class NodesPanel {
  constructor(api) {
    this.api = api;
  }

  async refresh() {
    const answer = await this.api.get('/v1/nodes');
    const now = Date.now();
    const rows = answer.nodes.map((node) => {
      const age = node.last_seen === null ? null : (now - node.last_seen) / 1000;
      const quiet = age === null || age > QUIET_INTERVALS * Math.max(node.reporting_interval_s, 1);
      const refused = Object.entries(node.refused)
        .map(([reason, count]) => `${reason.replaceAll('_', ' ')}: ${count}`);
      return el('tr', { class: quiet ? 'node quiet-node' : 'node', 'data-node': node.id },
        el('th', { scope: 'row' }, node.id),
        el('td', {}, el('span', { class: quiet ? 'state state-quiet' : 'state state-ok' },
          quiet ? '⚠ quiet' : '● reporting')),
        el('td', {}, age === null ? 'never' : formatAge(age)),
        el('td', { class: 'number' }, node.accepted.toLocaleString()),
        el('td', {}, refused.length ? refused.join(', ') : 'none'));
    });
    const d = answer.datagrams;
    document.getElementById('node-list').replaceChildren(
      el('div', { class: 'table-scroll' }, el('table', { class: 'nodes' },
        el('thead', {}, el('tr', {}, ['Node', 'State', 'Last heard', 'Accepted', 'Refused']
          .map((h) => el('th', { scope: 'col' }, h)))),
        el('tbody', {}, rows))),
      el('p', { class: 'quiet' }, `Datagrams: ${d.received.toLocaleString()} received, `
        + `${d.stored.toLocaleString()} stored, ${d.duplicates.toLocaleString()} duplicates, `
        + `${d.write_failures} write failures, ${d.kernel_drops} dropped by the kernel.`));
  }
}
