// Records of runs, and everything shown or exported from them. A finished run becomes a record: its files (names,
// sizes, SHA-256), the recipe and options it ran with, the result, when it finished. The results area shows one
// record (or two side by side); every export is written from the record on view and named from it; when the
// current files or settings differ from a record on view, it says so in words with one click to run again.
// Records live in this page's memory only.
'use strict';
(function (PD) {
  const { $, el } = PD;
  const S = PD.state;
  S.records = [];
  S.onView = []; // record ids on view: one, or two side by side

  PD.KIND_WORDS = { table: 'decoding', time: 'decoding over time', neurons: 'what each neuron contributes', compare: 'decoders compared' };

  // The files now loaded, as a record keeps them.
  PD.currentFiles = function () {
    if (S.kind === 'study') return S.files.study ? S.files.study.files.map((f) => ({ slot: 'study', name: f.name, size: f.size })) : [];
    const order = S.kind === 'events' ? ['events', 'trials'] : [S.kind === 'nwb' ? 'nwb' : 'table'];
    return order.filter((s) => S.files[s]).map((s) => ({ slot: s, name: S.files[s].name, size: S.files[s].size }));
  };

  // A record's report; a comparison's decoders share one split and one recipe, so its first report stands for them.
  function reportOf(record) {
    if (!record.result) return undefined;
    return record.kind === 'compare' ? (record.result.rows.find((x) => x.report) || {}).report : record.result.report;
  }

  // The files' SHA-256 as the result states them (the report is what the CLI would write).
  function hashes(record) {
    const r = reportOf(record);
    if (r && r.study) {
      return [[r.study.file, r.study.sha256], ...r.sessions.flatMap((s) => s.files.map((f) => [f.file, f.sha256]))];
    }
    if (r && r.sha256 && r.file) return [[r.file, r.sha256]];
    if (!r || !r.input) return [];
    if (r.input.sha256) return [[r.input.file, r.input.sha256]];
    if (Array.isArray(r.input.files)) return r.input.files.map((f) => [f.file, f.sha256]);
    return [];
  }

  PD.addRecord = function (record, viaKeyboard) {
    record.id = S.records.length + 1;
    record.finished = new Date();
    record.stem = `${PD.stem(record.files[record.files.length - 1].name)}-run${record.id}`;
    // Every file with the SHA-256 the result states for it.
    const hs = hashes(record);
    record.files.forEach((f) => { const h = hs.find(([name]) => name === f.name || PD.baseName(name) === f.name); if (h) f.sha256 = h[1]; });
    S.records.push(record);
    S.onView = [record.id];
    drawList();
    drawViews();
    const heading = document.querySelector('#views .view h3');
    if (viaKeyboard && heading) heading.focus();
    else if (heading) heading.scrollIntoView({ behavior: 'smooth', block: 'start' });
  };

  const byId = (id) => S.records.find((r) => r.id === id);

  function headline(record) {
    if (record.kind === 'compare') return `${record.result.rows.filter((r) => r.report).length} decoders compared`;
    if (record.kind === 'neurons') return `${record.result.report.dropping.length} subset sizes, ${record.result.report.single.length} neurons alone`;
    return record.result.headline;
  }

  function drawList() {
    const list = $('records');
    list.replaceChildren();
    $('records-box').hidden = S.records.length === 0;
    $('no-results').hidden = S.records.length > 0;
    [...S.records].reverse().forEach((r) => {
      const li = el('li');
      if (S.onView.includes(r.id)) li.className = 'on-view';
      const what = el('span', null, 'record-text');
      what.appendChild(el('strong', `Run ${r.id}`));
      what.appendChild(document.createTextNode(` · ${PD.kindWords(r)} · ${r.files.map((f) => f.name).join(' + ')} · ` +
        `${r.kind === 'compare' ? 'every decoder' : PD.DECODER_NAMES[r.recipe.classifier]} · ${PD.clock(r.finished)} — ${PD.unbroken(headline(r))}`));
      li.appendChild(what);
      const buttons = el('span', null, 'record-buttons');
      const shown = S.onView.includes(r.id);
      const alone = shown && S.onView.length === 1;
      const show = PD.button(alone ? 'On view' : 'Show', () => { S.onView = [r.id]; drawList(); drawViews(); }, alone ? `On view: run ${r.id}` : `Show run ${r.id}`);
      show.disabled = shown && S.onView.length === 1;
      buttons.appendChild(show);
      if (S.records.length > 1 && !shown) {
        buttons.appendChild(PD.button('Side by side', () => { S.onView = [S.onView[0], r.id]; drawList(); drawViews(); },
          `Side by side: run ${r.id} beside run ${S.onView[0]}`));
      }
      li.appendChild(buttons);
      list.appendChild(li);
    });
  }

  function drawViews() {
    const box = $('views');
    box.replaceChildren();
    box.classList.toggle('pair', S.onView.length === 2);
    S.onView.forEach((id, i) => {
      const record = byId(id);
      const view = el('article', null, 'view');
      view.dataset.record = String(id);
      const h = el('h3', `Run ${id}: ${PD.kindWords(record)}`);
      h.tabIndex = -1;
      h.id = `view-h-${i}`;
      view.setAttribute('aria-labelledby', h.id);
      view.appendChild(h);
      if (S.onView.length === 2) {
        view.appendChild(PD.button('Close', () => { S.onView = S.onView.filter((x) => x !== id); drawList(); drawViews(); }, `Close run ${id}`));
      }
      view.appendChild(provenance(record));
      const stale = el('div', null, 'stale');
      stale.setAttribute('role', 'status');
      view.appendChild(stale);
      PD.views[record.kind](record, view, exportsFor(record));
      box.appendChild(view);
    });
    PD.markStale();
  }

  function provenance(record) {
    const p = el('p', null, 'provenance');
    const hs = hashes(record);
    const files = record.files.map((f) => {
      const h = hs.find(([name]) => name === f.name);
      const sha = f.sha256 || (h && h[1]);
      return `${f.name}${sha ? ` (SHA-256 ${sha})` : ''}`;
    }).join(' and ');
    p.appendChild(el('strong', 'From '));
    const compare = record.kind === 'compare';
    const report = reportOf(record);
    p.appendChild(document.createTextNode(`${files}, with ${PD.describeSettings(record.recipe, report && report.design, report && report.recipe, compare)}` +
      (record.draws ? `; ${record.draws} random subsets per size` : '') +
      `. Finished at ${PD.clock(record.finished)} in ${record.seconds.toFixed(1)} s.`));
    return p;
  }

  // What differs between a record and the current files and settings, in words (empty: it matches).
  PD.differences = function (record) {
    const out = [];
    const now = PD.currentFiles();
    if (record.generation !== S.generation || record.dataKind !== S.kind) {
      out.push(`the data (now ${now.length ? now.map((f) => f.name).join(' and ') : 'no file'})`);
    }
    if (!S.check) return out;
    const kind = PD.startKind(record);
    const current = PD.runRecipe(kind, S.check.recipe);
    if (record.kind === 'study' && record.options !== PD.runOptions('study')) out.push('the study\'s options (pooling, group draws, group α, subjects or flagged sessions)');
    // A split that held out each group or each trial in turn stays so for any Folds setting at least the number of
    // groups (or trials): a change of Folds that keeps the split changes nothing, one below it changes the split
    // (the group column, which decides the split too, is compared as itself). Until the current settings' plan is
    // known, a change of Folds counts.
    const report = reportOf(record);
    const split = report && report.design && report.design.split;
    const sameSplit = { leave_one_group_out: 'logo', leave_one_out: 'loo' }[split];
    const foldsUnused = !!sameSplit && !!S.check.plan && PD.schemeWords(current, S.check.plan).split === sameSplit;
    // A comparison fitted every decoder: the Decoder setting did not choose among them.
    out.push(...PD.recipeChanges(record.recipe, current).filter((c) => !(foldsUnused && c.startsWith('Folds ('))
      && !(record.kind === 'compare' && c.startsWith('Decoder ('))));
    if (record.kind === 'neurons' && PD.readDraws() !== record.draws) out.push(`random subsets per size (${record.draws} → ${$('draws').value})`);
    return out;
  };

  // Mark each record on view that no longer matches the current files and settings.
  PD.markStale = function () {
    document.querySelectorAll('#views .view').forEach((view) => {
      const record = byId(Number(view.dataset.record));
      const box = view.querySelector('.stale');
      const diff = PD.differences(record);
      view.classList.toggle('is-stale', diff.length > 0);
      // Redrawn only when what differs changed: a field left by clicking this box's button fires its change on
      // the way, and a button replaced between press and release would swallow the click.
      const said = diff.join('; ');
      const again = box.querySelector('button');
      if (box.dataset.said === said && (again || !diff.length)) {
        if (again) again.disabled = !!S.run || $('start').disabled;
        return;
      }
      box.dataset.said = said;
      box.replaceChildren();
      if (!diff.length) return;
      box.appendChild(el('strong', 'Not the current settings. '));
      box.appendChild(document.createTextNode(`These results are from run ${record.id}; since then ${diff.length === 1 ? 'this has' : 'these have'} changed: ${diff.join('; ')}. `));
      const button = PD.button('Run again with the current settings', (ev) => {
        PD.start(PD.startKind(record), ev.detail === 0);
      });
      button.disabled = !!S.run || $('start').disabled;
      box.appendChild(button);
    });
  };
  PD.on('checked', () => PD.markStale());

  // ---------- exports, all from the record ----------
  function exportsFor(record) {
    const name = (suffix) => `${record.stem}${suffix}`;
    return {
      name,
      json: () => PD.download(name('-result.json'), record.result.report_json + '\n', 'application/json'),
      recipe: () => PD.download(name('.recipe.json'), JSON.stringify(record.recipe, null, 2) + '\n', 'application/json'),
      text: (suffix, text, type) => PD.download(name(suffix), text, type),
    };
  }
}(window.PD));
