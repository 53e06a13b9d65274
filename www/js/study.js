// A study on the page: many sessions (and animals) dropped at once, as files or a folder. The study table (a CSV
// with the columns file and session, and optionally subject) says which file is which session; without one, each
// file is a session. Before a run the page lists every session as it would enter (subject, trials, neurons,
// trials per class: the core's `study_sessions`) with each subject editable, and the sessions that cannot enter
// with the reason and one box to leave them out. The label and group selects offer the first session's columns.
'use strict';
(function (PD) {
  const { $, el } = PD;
  const S = PD.state;
  S.study = null; // { table: name or null, rows: [{file, session, subject?}], subjects: {session: edited subject} }

  const isTable = (info) => info && info.headers.includes('file') && info.headers.includes('session');

  // The files dropped or chosen for a study: inspected in the data worker (NWB files read into their extracts).
  PD.loadStudy = async function (files) {
    PD.clearError('data-error');
    const chosen = files.filter((f) => !/(^|\/)\./.test(f.webkitRelativePath || f.name));
    if (!chosen.length) return;
    const gen = ++S.generation;
    // A file loaded before (as a trial table, say) is not this study's: its summary and preview go.
    $('file-summaries').replaceChildren();
    $('previews').replaceChildren();
    $('data-status').textContent = `Reading ${PD.count(chosen.length, 'file')}…`;
    let answers;
    try {
      if (!S.data) S.data = new PD.DataWorker(S.module);
      answers = await S.data.ask('study-put', { files: chosen });
    } catch (e) {
      if (gen !== S.generation) return;
      delete S.files.study;
      S.study = null;
      $('data-status').textContent = '';
      PD.showError('data-error', e.message);
      PD.emit('data');
      return;
    }
    if (gen !== S.generation) return;
    const table = answers.find((a) => isTable(a.info));
    let rows = answers.filter((a) => a !== table).map((a) => ({ file: a.name, session: PD.stem(a.name) }));
    if (table) {
      try { rows = JSON.parse(await S.data.ask('study-rows', { name: table.name })); } catch (e) {
        PD.showError('data-error', e.message);
      }
    }
    const sessions = answers.filter((a) => a !== table);
    S.study = { table: table ? table.name : null, rows, subjects: {}, answers: sessions, holds: guessHolds(sessions, rows) };
    $('study-holds').value = S.study.holds;
    S.files.study = { name: table ? table.name : `${PD.count(rows.length, 'session')}`, size: 0, info: null,
      files: chosen.map((f) => ({ name: f.name, size: f.size })) };
    $('data-status').textContent = (table ? `Study table ${table.name}` : 'No study table: each file is one session') +
      ` and ${PD.count(chosen.length - (table ? 1 : 0), 'session file')}.`;
    sessionColumns();
    PD.showKind();
    $('data-view').hidden = false;
    $('layout-examples').hidden = true;
    PD.emit('data');
  };

  // What each session is, told from the files: NWB files; spike events when the study table names trial tables;
  // binned tables when the first session has a trial column and a time column; else trial tables.
  function guessHolds(sessions, rows) {
    if (sessions.length && sessions.every((a) => a.nwb)) return 'nwb';
    if (rows.some((r) => r.trials)) return 'events';
    const first = sessions.find((a) => a.info);
    const h = first ? first.info.headers : [];
    if (h.some((c) => /^trials?([ _-]?(id|number|no))?$/i.test(c)) && h.some((c) => /^(time|t|bin|bin[ _]?time)$/i.test(c))) return 'binned';
    return 'table';
  }

  // The column selects from the first session as the sessions are read: its trial table (for spike events, the
  // one the study table names, and the events file's own columns), or its NWB file's trials table.
  function sessionColumns() {
    const st = S.study;
    const byName = (name) => name && st.answers.find((a) => a.name === name || a.name === name.split('/').pop());
    const first = st.rows.length ? byName(st.rows[0].file) : st.answers[0];
    let info = null;
    if (st.holds === 'nwb') {
      if (first && first.nwb) { const f = { info: first.nwb }; PD.nwbColumns(f); info = f.columns; }
    } else if (st.holds === 'events') {
      const trials = st.rows.length ? byName(st.rows[0].trials) : null;
      if (trials && trials.info) { info = trials.info; PD.columnsFrom(info); }
      if (first && first.info) PD.eventColumns(first.info);
    } else if (first && first.info) {
      info = first.info;
      PD.columnsFrom(info);
    }
    S.files.study.info = info;
  }

  // The study's options, as JSON text with a fixed key order (a record compares them as text): the study table's
  // name while every subject is the table's, else the session list with the subjects as edited.
  PD.studyOptions = function () {
    const draws = $('study-draws').value.trim();
    const alpha = $('study-alpha').value.trim();
    const o = {
      pool: $('study-pool').checked,
      leave_out_flagged: !!($('study-leave-out') && $('study-leave-out').checked),
      group_draws: /^\d+$/.test(draws) && Number(draws) > 0 ? Number(draws) : 10000,
      alpha: Number(alpha) > 0 && Number(alpha) < 1 ? Number(alpha) : 0.05,
    };
    const st = S.study;
    if (!st) return JSON.stringify(o);
    const edited = Object.keys(st.subjects).length > 0;
    if (st.table && !edited) o.table = st.table;
    else {
      o.sessions = st.rows.map((r) => {
        const row = { file: r.file, session: r.session };
        const subject = r.session in st.subjects ? st.subjects[r.session] : r.subject;
        if (subject) row.subject = subject;
        if (r.trials) row.trials = r.trials;
        return row;
      });
    }
    return JSON.stringify(o);
  };

  // Problems of the study's own fields, each beside its field.
  PD.studyProblems = function () {
    const problems = [];
    if (!/^\s*\d+\s*$/.test($('study-draws').value) || Number($('study-draws').value) < 1) problems.push(['study-draws', 'Group draws must be a whole number, 1 or more.']);
    const a = Number($('study-alpha').value);
    if (!(a > 0 && a < 1)) problems.push(['study-alpha', 'Group α must be a number between 0 and 1 (for example 0.05).']);
    return problems;
  };

  // The sessions as they would enter, drawn before the check prepares the run (`stale()`: a newer check began).
  PD.listSessions = async function (recipe, stale) {
    const box = $('study-sessions');
    const listing = await S.data.ask('study-sessions', { recipe: JSON.stringify(recipe), options: PD.studyOptions() });
    if (stale()) return;
    box.replaceChildren();
    const leave = $('study-leave-out') ? $('study-leave-out').checked : false;
    const rows = listing.sessions.map((s) => {
      const input = el('input');
      input.type = 'text';
      input.className = 'small';
      input.value = s.subject || '';
      input.setAttribute('aria-label', `Subject of session ${s.session}`);
      input.addEventListener('change', () => { S.study.subjects[s.session] = input.value.trim(); PD.refresh(); });
      return [{ text: s.session, cls: 'text', header: true }, { node: input }, s.trials, s.neurons,
        { text: s.class_counts.map((n, i) => `${listing.classes[i]} ${n}`).join(', '), cls: 'text' }];
    });
    const t = PD.table(box, `Sessions of the study (${PD.count(listing.sessions.length, 'session')} can enter)`,
      ['session', 'subject', 'trials', 'neurons', 'trials per class'], rows.map((r) => r.map((c) => (c && c.node ? '' : c))));
    // The subject cells hold inputs (PD.table writes text only).
    [...t.querySelectorAll('tr')].slice(1).forEach((tr, i) => tr.children[1].appendChild(rows[i][1].node));
    if (listing.left_out.length) {
      const flagged = el('div', null, 'warning');
      flagged.appendChild(el('p', `${PD.count(listing.left_out.length, 'session')} cannot enter the study as it is set up:`));
      const ul = el('ul');
      listing.left_out.forEach((l) => ul.appendChild(el('li', `${l.session}${l.subject ? ` (${l.subject})` : ''}: ${PD.pageWords(l.reason)}`)));
      flagged.appendChild(ul);
      const p = el('p', null, 'field check');
      const box2 = el('input');
      box2.type = 'checkbox'; box2.id = 'study-leave-out'; box2.checked = leave;
      box2.addEventListener('change', PD.refresh);
      const label = el('label', 'Leave these sessions out (the results will list them with the reason)');
      label.htmlFor = 'study-leave-out';
      p.append(box2, label);
      flagged.appendChild(p);
      box.appendChild(flagged);
    }
  };

  // The check's summary for a study: what a run will do, in fits, tasks and workers.
  PD.drawStudyPlan = function (c) {
    const fits = c.plan.fits.reduce((a, b) => a + b, 0);
    const workers = PD.workersFor(null, c.plan.tasks.length).workers;
    const seconds = c.msTotal !== undefined ? c.msTotal / 1000 / PD.speedOf(workers) : null;
    c.seconds = seconds;
    c.memory = null;
    $('estimate').textContent = `${PD.count(fits, 'fit')} in ${PD.count(c.plan.tasks.length, 'task')} on ${PD.count(workers, 'worker')}` +
      (seconds !== null ? `: ${PD.about(seconds)} on this computer` : PD.timingNow() ? ' (timing a task on this computer…)' : '') + '.';
  };

  window.addEventListener('DOMContentLoaded', () => {
    const take = async (e) => {
      const files = [...e.target.files];
      e.target.value = '';
      if (files.length) await PD.loadStudy(files);
    };
    $('study-files').addEventListener('change', take);
    $('study-folder').addEventListener('change', take);
    ['study-pool', 'study-draws', 'study-alpha'].forEach((id) => $(id).addEventListener('change', PD.refresh));
    $('study-holds').addEventListener('change', () => {
      if (!S.study) return;
      S.study.holds = $('study-holds').value;
      sessionColumns();
      PD.showKind();
      PD.emit('data');
      PD.refresh();
    });
  });
}(window.PD));
