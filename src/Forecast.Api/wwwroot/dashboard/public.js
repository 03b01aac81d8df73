// Public view: released forecasts only, from /v1/public. Polls the released forecast with If-None-Match and
// redraws when it changes (a new release, a withdrawal).
import { el, Poller, pollSeconds, sequenceParam, showMessage, renderExercise, renderCautions, renderTable,
  renderAdvisory, renderStatus, startClock, plotFigure } from './common.js';

let view = null;
let checked = null;

async function listSequences() {
  const r = await fetch('/v1/public/sequences', { cache: 'no-store' });
  if (!r.ok) { showMessage(`The list of sequences could not be loaded (HTTP ${r.status}).`, true); return; }
  const list = await r.json();
  const ul = document.getElementById('sequences');
  ul.replaceChildren(...list.map(s => el('li', {},
    el('a', { href: `?sequence=${s.id}`, text: s.title }),
    ` · mainshock M ${s.mainshockMagnitude.toFixed(1)}, forecast ${s.latestReleasedNumber}`)));
  if (list.length === 0) ul.append(el('li', { text: 'No sequence has a released forecast at present.' }));
  document.getElementById('sequence-list').hidden = false;
  const anyExercise = list.some(s => s.exercise);
  document.getElementById('exercise-banner').hidden = !anyExercise;
  if (anyExercise) document.getElementById('exercise-banner').textContent =
    'EXERCISE EXERCISE EXERCISE: sequences marked EXERCISE are drills, not real forecasts.';
}

async function showSequence(id) {
  const poller = new Poller(`/v1/public/sequences/${id}/forecast`, {},
    async () => {
      checked = Date.now();
      const r = await fetch(`/v1/public/sequences/${id}/dashboard`, { cache: 'no-store' });
      if (!r.ok) { showMessage(`The forecast could not be loaded (HTTP ${r.status}).`, true); return; }
      render(await r.json());
    },
    () => { checked = Date.now(); },
    status => {
      checked = Date.now();
      showMessage(status === 404 ? 'This sequence has no released forecast at present.' : `Update failed (${status}); retrying.`, status !== 404);
      if (status === 404) document.getElementById('forecast').hidden = true;
    });
  poller.start(pollSeconds());
  startClock(() => view, () => checked);
}

function render(v) {
  view = v;
  renderExercise(v);
  renderCautions(v);
  renderStatus(v);
  renderTable(v);
  renderAdvisory(v);
  document.getElementById('plots').replaceChildren(...v.plots.map(p => plotFigure(p, p.url)));
  document.getElementById('forecast').hidden = false;
  document.title = `${v.title}: forecast ${v.number}`;
  showMessage(`Showing released forecast ${v.number}.`);
}

const id = sequenceParam();
if (id) showSequence(id); else listSequences();
