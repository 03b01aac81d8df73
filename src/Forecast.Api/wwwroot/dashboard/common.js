// Shared by the public and analyst pages: building DOM safely (text only, never HTML strings), the forecast
// table, the cautions, freshness, and polling with If-None-Match (RFC 9110, 13.1.2).

export function el(tag, attrs = {}, ...children) {
  const node = document.createElement(tag);
  for (const [k, v] of Object.entries(attrs)) {
    if (v === null || v === undefined || v === false) continue;
    if (k === 'class') node.className = v;
    else if (k === 'text') node.textContent = v;
    else node.setAttribute(k, v === true ? '' : String(v));
  }
  for (const c of children) node.append(c);
  return node;
}

export function utc(iso) {
  if (!iso) return '';
  const d = new Date(iso);
  return d.toISOString().slice(0, 16).replace('T', ' ') + ' UTC';
}

/** "3 min ago": the largest whole unit. */
export function ago(ms) {
  const s = Math.max(0, Math.round(ms / 1000));
  if (s < 90) return `${s} s ago`;
  const m = Math.round(s / 60);
  if (m < 90) return `${m} min ago`;
  const h = Math.round(m / 60);
  if (h < 36) return `${h} h ago`;
  return `${Math.round(h / 24)} days ago`;
}

export function number(x, digits = 1) {
  if (x === null || x === undefined) return '';
  if (x !== 0 && Math.abs(x) < 0.05) return x.toPrecision(2);
  return x.toFixed(digits);
}

/** Poll interval in seconds: ?poll=N (at least 1), else 30. */
export function pollSeconds() {
  const v = Number(new URLSearchParams(location.search).get('poll'));
  return Number.isFinite(v) && v >= 1 ? v : 30;
}

export function sequenceParam() {
  const v = new URLSearchParams(location.search).get('sequence');
  return v && /^\d+$/.test(v) ? v : null;
}

export function showMessage(text, isError = false) {
  const m = document.getElementById('message');
  m.textContent = text;
  m.classList.toggle('error', isError);
}

export function renderExercise(view) {
  const banner = document.getElementById('exercise-banner');
  banner.hidden = !view.exercise;
  if (view.exercise && view.notice) banner.textContent = view.notice;
}

export function renderCautions(view) {
  const list = document.getElementById('caution-list');
  list.replaceChildren(...view.cautions.map(c => el('li', { text: c })));
  document.getElementById('agency').textContent = view.agency;
}

export function renderTable(view) {
  const body = document.querySelector('#forecast-table tbody');
  body.replaceChildren(...view.table.map(r => el('tr', {
      'data-t1': r.t1Days, 'data-t2': r.t2Days, 'data-min-magnitude': r.minMagnitude,
    },
    el('td', { 'data-label': 'Window', text: `${r.window} (${utc(r.startUtc)} to ${utc(r.endUtc)})` }),
    el('td', { 'data-label': 'Magnitude', class: 'num', text: `M ${r.minMagnitude.toFixed(1)} or more` }),
    el('td', { 'data-label': 'Chance of at least one', class: 'prob num' },
      el('strong', { text: r.percent }), ' ', el('span', { class: 'word', text: `(${r.word})` })),
    el('td', { 'data-label': 'Expected number', class: 'expected num',
      text: `${number(r.expectedNumber)} (95 % range ${r.low95} to ${r.high95})` }),
    el('td', { 'data-label': 'Usual chance without the sequence', class: 'background num',
      text: r.backgroundPercent ?? 'not known' }))));
}

export function renderAdvisory(view) {
  document.getElementById('advisory').textContent = view.advisory;
}

export function renderStatus(view) {
  document.getElementById('forecast-number').textContent = String(view.number);
  const badge = document.getElementById('state-badge');
  badge.textContent = view.state;
  badge.className = `badge ${view.state}`;
  document.getElementById('issued').textContent = `Issued ${utc(view.issueTime)}`;
  document.getElementById('sequence-title').textContent = view.title;
  document.getElementById('mainshock').textContent =
    `Mainshock M ${view.mainshockMagnitude.toFixed(1)} on ${utc(view.mainshockTime)} at ` +
    `${Math.abs(view.centreLatitude).toFixed(2)}° ${view.centreLatitude >= 0 ? 'N' : 'S'}, ` +
    `${Math.abs(view.centreLongitude).toFixed(2)}° ${view.centreLongitude >= 0 ? 'E' : 'W'}; ` +
    `aftershock zone ${view.zoneRadiusKm.toFixed(0)} km; ${view.eventCount} events.`;
}

/** Keeps "issued ... ago" and the stale flag current, once a second. */
export function startClock(getView, getChecked) {
  const tick = () => {
    const view = getView();
    if (!view) return;
    const now = Date.now();
    document.getElementById('age').textContent = `(${ago(now - Date.parse(view.issueTime))})`;
    const stale = now >= Date.parse(view.freshness.staleAt);
    const flag = document.getElementById('stale-flag');
    flag.hidden = !stale;
    flag.textContent = stale
      ? `STALE: older than its ${number(view.freshness.cadenceHours, 0)} h refresh interval; a newer forecast may be due.`
      : '';
    flag.title = view.freshness.rule;
    const fresh = document.getElementById('fresh-flag');
    fresh.hidden = stale;
    fresh.textContent = stale ? '' : `Current: next refresh due by ${utc(view.freshness.staleAt)}.`;
    const checked = getChecked();
    document.getElementById('checked').textContent = checked ? `Checked for updates ${ago(now - checked)}.` : '';
  };
  tick();
  return setInterval(tick, 1000);
}

/** Polls url with If-None-Match; calls onChange(json) on a 200 and onSame() on a 304. */
export class Poller {
  constructor(url, headers, onChange, onSame, onError) {
    Object.assign(this, { url, headers, onChange, onSame, onError, etag: null, timer: null });
  }

  async poll() {
    const headers = { ...this.headers };
    if (this.etag) headers['If-None-Match'] = this.etag;
    try {
      // A conditional header makes fetch bypass the HTTP cache, so a 304 reaches this code as itself.
      const r = await fetch(this.url, { headers, cache: 'no-store' });
      if (r.status === 304) {
        document.body.dataset.notModified = String(Number(document.body.dataset.notModified ?? 0) + 1);
        this.onSame();
        return;
      }
      if (!r.ok) { this.onError(r.status); return; }
      this.etag = r.headers.get('ETag');
      await this.onChange(await r.json());
    } catch (e) {
      this.onError(String(e));
    }
  }

  start(seconds) {
    this.stop();
    this.poll();
    this.timer = setInterval(() => this.poll(), seconds * 1000);
  }

  stop() { if (this.timer) clearInterval(this.timer); this.timer = null; }
}

export function plotFigure(plot, src, link = true) {
  return el('figure', { 'data-plot': plot.kind },
    el('img', { src, alt: plot.description, width: 760 }),
    el('figcaption', { text: plot.title }),
    el('p', { text: plot.description }),
    link ? el('p', {}, el('a', { href: plot.url, text: 'Open the SVG' })) : '');
}
