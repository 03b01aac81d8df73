// Analyst desk: the key is entered once and kept in sessionStorage (this tab only); drafts, fit diagnostics,
// release and withdraw with a confirmation. Plots need the key, which an <img> cannot send, so they are fetched
// and shown from blob: URLs.
import { el, utc, number, Poller, pollSeconds, sequenceParam, showMessage, renderExercise, renderCautions,
  renderTable, renderAdvisory, renderStatus, startClock, plotFigure } from './common.js';

const KEY = 'forecast.analystKey';
let view = null;
let checked = null;
let poller = null;
let blobs = [];
let shownNumber = null;

const key = () => sessionStorage.getItem(KEY);
const auth = () => ({ Authorization: `Bearer ${key()}` });

async function api(path, options = {}) {
  const r = await fetch(path, { cache: 'no-store', ...options, headers: { ...auth(), ...(options.headers ?? {}) } });
  if (r.status === 401) {
    sessionStorage.removeItem(KEY);
    showKeyState();
    throw new Error('The key is unknown or revoked; enter a valid analyst key.');
  }
  if (r.status === 403) throw new Error('This key is not an analyst key.');
  if (!r.ok) {
    let detail = '';
    try { detail = (await r.json()).detail ?? ''; } catch { /* not problem details */ }
    throw new Error(`HTTP ${r.status}${detail ? ': ' + detail : ''}`);
  }
  return r;
}

function showKeyState() {
  const has = !!key();
  document.getElementById('key-form').hidden = has;
  document.getElementById('key-status').hidden = !has;
}

async function listSequences() {
  const list = await (await api('/v1/sequences?status=active')).json();
  const ul = document.getElementById('sequences');
  ul.replaceChildren(...list.map(s => el('li', {},
    el('a', { href: `?sequence=${s.id}${location.search.includes('poll=') ? '&poll=' + pollSeconds() : ''}`,
      text: `${s.exercise ? 'EXERCISE: ' : ''}${s.name ?? 'Sequence ' + s.id}` }),
    ` · mainshock M ${s.mainshock.magnitude.toFixed(1)} on ${utc(s.mainshock.time)}`,
    s.lastError ? el('span', { class: 'stale', text: ` Last fit failed: ${s.lastError}` }) : '')));
  if (list.length === 0) ul.append(el('li', { text: 'No active sequence.' }));
  document.getElementById('sequence-list').hidden = false;
}

async function showSequence(id) {
  poller?.stop();
  poller = new Poller(`/v1/sequences/${id}/forecasts/latest`, auth(),
    async latest => { checked = Date.now(); await load(id, latest.number); },
    () => { checked = Date.now(); },
    status => { checked = Date.now(); showMessage(status === 404 ? 'No forecast has been computed for this sequence yet.' : `Update failed (${status}); retrying.`, status !== 404); });
  poller.start(pollSeconds());
  startClock(() => view, () => checked);
}

async function load(id, numberToShow) {
  try {
    const [history, v] = await Promise.all([
      api(`/v1/sequences/${id}/forecasts?limit=50`).then(r => r.json()),
      api(`/v1/sequences/${id}/forecasts/${numberToShow}/dashboard`).then(r => r.json()),
    ]);
    shownNumber = numberToShow;
    render(v, history);
  } catch (e) {
    showMessage(e.message, true);
  }
}

function render(v, history) {
  view = v;
  renderExercise(v);
  renderCautions(v);
  renderStatus(v);
  renderTable(v);
  renderAdvisory(v);
  renderDiagnostics(v.diagnostics);
  renderHistory(v, history);
  document.getElementById('release-button').hidden = v.state !== 'draft';
  document.getElementById('withdraw-button').hidden = v.state === 'withdrawn';
  document.getElementById('forecast').hidden = false;
  document.title = `${v.title}: forecast ${v.number} (${v.state})`;
  renderPlots(v);
}

function renderHistory(v, history) {
  document.getElementById('history').replaceChildren(...history.map(f => el('li', { 'data-number': f.number },
    `Forecast ${f.number}: `, el('span', { class: `badge ${f.state}`, text: f.state }),
    ` issued ${utc(f.issueTime)} (${f.reason}), Mc ${f.mc.toFixed(1)}, ${f.input.eventCount} events `,
    f.number === v.number ? el('strong', { text: '· shown' })
      : el('button', { type: 'button', class: 'secondary', 'data-show': f.number, text: `Show ${f.number}` }))));
}

function renderDiagnostics(d) {
  const rows = [];
  const add = (term, value) => rows.push(el('dt', { text: term }), el('dd', { text: value }));
  const c = d.completeness, b = d.bValue, o = d.omori, p = d.posterior, pr = d.prior;
  add('Completeness Mc', `${number(c.mc)} (${c.source}; maximum curvature ${c.maxCurvatureMc ?? 'n/a'}, goodness of fit ${c.goodnessOfFitMc ?? 'n/a'}; bins ${c.binWidth})`);
  add('Fit window', `day ${number(d.fitStartDays, 3)} (${d.fitStartSource}) to day ${number(d.fitEndDays, 2)}; ${d.aftershockCount} aftershocks to the issue time`);
  add('b-value', `${number(b.b, 2)}${b.sigma ? ' ± ' + number(b.sigma, 2) : ''} from ${b.count} events${b.usesGenericB ? ' (generic value used: ' + b.reason + ')' : ''}`);
  add('Omori-Utsu fit', o.k ? `K ${number(o.k, 2)}, c ${number(o.c, 4)} d, p ${number(o.p, 2)}${o.sigmaP ? ' ± ' + number(o.sigmaP, 2) : ''} (${o.status}, ${o.eventCount} events)` : `${o.status}: ${o.message}`);
  add('Posterior (model)', `a ${number(p.a, 2)} ± ${number(p.sdA, 2)}, b ${number(p.b, 2)} ± ${number(p.sdB, 2)}, p ${number(p.p, 2)} ± ${number(p.sdP, 2)}, log10 c ${number(p.log10C, 2)} ± ${number(p.sdLog10C, 2)}; ${p.coverageOk ? 'grid coverage good' : 'GRID COVERAGE POOR: ' + p.message}`);
  add('Prior', `${pr.name}: a ${number(pr.a, 2)}, b ${number(pr.b, 2)}, p ${number(pr.p, 2)}, c ${number(pr.c, 3)} d${pr.fromMemory ? ' (values from memory)' : ''}`);
  add('Engine and input', `${d.engineVersion}, parameter set ${d.parameterSet}, reason ${d.reason}; catalog ${d.catalogHash.slice(0, 19)}…`);
  document.getElementById('diagnostics').replaceChildren(...rows);
  document.getElementById('notes').replaceChildren(...(d.notes ?? []).map(n => el('li', { text: n })));
}

async function renderPlots(v) {
  const figures = await Promise.all(v.plots.map(async plot => {
    try {
      const blob = await (await api(plot.url)).blob();
      return plotFigure(plot, URL.createObjectURL(blob), false);
    } catch (e) {
      return el('figure', {}, el('figcaption', { text: plot.title }), el('p', { text: `Not loaded: ${e.message}. ${plot.description}` }));
    }
  }));
  if (view !== v) return;
  blobs.forEach(u => URL.revokeObjectURL(u));
  blobs = figures.map(f => f.querySelector('img')?.src).filter(Boolean);
  document.getElementById('plots').replaceChildren(...figures);
}

function confirmAction(title, text, yesLabel, withReason) {
  const dialog = document.getElementById('confirm-dialog');
  document.getElementById('confirm-title').textContent = title;
  document.getElementById('confirm-text').textContent = text;
  document.getElementById('confirm-yes').textContent = yesLabel;
  document.getElementById('reason-row').hidden = !withReason;
  document.getElementById('confirm-reason').value = '';
  dialog.showModal();
  return new Promise(resolve => {
    const done = answer => {
      dialog.close();
      yes.removeEventListener('click', onYes);
      no.removeEventListener('click', onNo);
      resolve(answer);
    };
    const yes = document.getElementById('confirm-yes');
    const no = document.getElementById('confirm-no');
    const onYes = () => done(true);
    const onNo = () => done(false);
    yes.addEventListener('click', onYes);
    no.addEventListener('click', onNo);
    dialog.addEventListener('cancel', () => done(false), { once: true });
  });
}

async function release() {
  const v = view;
  const ok = await confirmAction(`Release forecast ${v.number}?`,
    `${v.exercise ? 'EXERCISE. ' : ''}Forecast ${v.number} of "${v.title}", issued ${utc(v.issueTime)}, becomes the public forecast; any earlier released forecast is superseded.`,
    `Release forecast ${v.number}`, false);
  if (!ok) { showMessage('Release cancelled; nothing changed.'); return; }
  try {
    await api(`/v1/sequences/${v.sequenceId}/forecasts/${v.number}/release`, { method: 'POST' });
    showMessage(`Forecast ${v.number} released.`);
    await load(v.sequenceId, v.number);
  } catch (e) { showMessage(`Not released: ${e.message}`, true); }
}

async function withdraw() {
  const v = view;
  const ok = await confirmAction(`Withdraw forecast ${v.number}?`,
    `${v.exercise ? 'EXERCISE. ' : ''}Forecast ${v.number} of "${v.title}" will never be shown publicly again. This cannot be undone.`,
    `Withdraw forecast ${v.number}`, true);
  if (!ok) { showMessage('Withdrawal cancelled; nothing changed.'); return; }
  const reason = document.getElementById('confirm-reason').value.trim();
  try {
    await api(`/v1/sequences/${v.sequenceId}/forecasts/${v.number}/withdraw`, {
      method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify({ reason: reason || null }),
    });
    showMessage(`Forecast ${v.number} withdrawn.`);
    await load(v.sequenceId, v.number);
  } catch (e) { showMessage(`Not withdrawn: ${e.message}`, true); }
}

function start() {
  showKeyState();
  if (!key()) { showMessage('Enter an analyst key to begin.'); return; }
  const id = sequenceParam();
  (id ? showSequence(id) : listSequences()).catch(e => showMessage(e.message, true));
}

document.getElementById('key-form').addEventListener('submit', e => {
  e.preventDefault();
  sessionStorage.setItem(KEY, document.getElementById('key-input').value.trim());
  document.getElementById('key-input').value = '';
  start();
});
document.getElementById('key-forget').addEventListener('click', () => {
  sessionStorage.removeItem(KEY);
  poller?.stop();
  location.href = 'analyst.html';
});
document.getElementById('release-button').addEventListener('click', release);
document.getElementById('withdraw-button').addEventListener('click', withdraw);
document.getElementById('history').addEventListener('click', e => {
  const n = e.target.closest('button[data-show]')?.dataset.show;
  if (n && view) load(view.sequenceId, Number(n));
});
start();
