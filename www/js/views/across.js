// The results view of generalization across conditions ("Does the code carry over between conditions?"): the
// decoder trained on some levels of a column and tested on the others, beside the score within the testing levels,
// for each assignment; the shuffle control; over time, the curve and its clusters. Figures come from the core
// (FIGURES); the assignments' CSV is written from the report, the curve's by the core.
'use strict';
(function (PD) {
  const { el, pct } = PD;

  const FIGURES = (res) => [
    { name: 'assignments', svg: res.plots.assignments, title: 'Each assignment', alt: 'Score when trained on some levels and tested on the others, beside the score within the testing levels, for each assignment' },
    { name: 'scores', svg: res.plots.scores, title: 'Scores over repeats', alt: 'Distribution of the generalization score over repeats' },
    { name: 'null', svg: res.plots.null, title: 'Shuffle null', alt: 'Shuffle null distribution with the observed generalization score' },
    { name: 'curve', svg: res.plots.curve, title: 'Generalization over time', alt: 'Generalization score at each time window with its shuffle null and clusters' },
    { name: 'generalization', svg: res.plots.generalization, title: 'Train time × test time', alt: 'Generalization score for every training and testing window' },
  ];

  const levels = (a) => `${a.train.join(', ')} → ${a.test.join(', ')}`;
  const headlineOf = (r, scores) => scores[r.design.headline === 'accuracy' ? 'accuracy' : 'balanced_accuracy'];

  function assignmentsTable(view, r) {
    if (!r.summary) return;
    const rows = r.assignments.map((a) => [{ text: levels(a), cls: 'text', header: true },
      `${pct(headlineOf(r, a).mean)} ± ${pct(headlineOf(r, a).sd)}`, pct(headlineOf(r, a.within).mean),
      a.null_p95 === null || a.null_p95 === undefined ? '—' : pct(a.null_p95),
      PD.pBound(a.p_value, r.shuffle.count), `${a.balance.train_trials} / ${a.balance.test_trials}`]);
    rows.push([{ text: 'every assignment', cls: 'text', header: true }, `${pct(headlineOf(r, r.summary).mean)} ± ${pct(headlineOf(r, r.summary).sd)}`,
      pct(headlineOf(r, r.within).mean), r.shuffle.p_value === null ? '—' : pct(r.shuffle.null_p95),
      PD.pBound(r.shuffle.p_value, r.shuffle.count), '']);
    PD.table(view, `Trained → tested on the levels of '${r.input.across_column}' (${r.design.headline.replace('_', ' ')}: mean ± SD over repeats, a spread over resampling, not a confidence interval; chance ${pct(r.chance.level)})`,
      ['trained → tested', 'across', 'within the testing levels', 'shuffled, 95th percentile', 'p', 'trials (train / test)'], rows);
  }

  function assignmentsCsv(r) {
    const q = (s) => '"' + String(s).replace(/"/g, '""') + '"';
    const lines = ['assignment,train,test,score,mean,sd,p2_5,p97_5,within_mean,null_p95,p_value'];
    r.assignments.forEach((a) => {
      const s = headlineOf(r, a);
      lines.push([a.index, q(a.train.join(';')), q(a.test.join(';')), r.design.headline, s.mean, s.sd, s.p2_5, s.p97_5,
        headlineOf(r, a.within).mean, a.null_p95 ?? '', a.p_value ?? ''].join(','));
    });
    return lines.join('\n') + '\n';
  }

  PD.views.across = function (record, view, ex) {
    const res = record.result;
    const r = res.report;
    view.appendChild(el('p', res.headline, 'headline'));
    PD.notes(view, r);
    PD.figures(view, FIGURES(res), ex);
    if (r.generalization && r.shuffle && r.shuffle.count) {
      view.appendChild(el('p', `The train × test matrix was tested against a ${
        PD.NULL_WORDS[r.generalization.null_method].replace(/^null of the generalization matrix: /, 'null with ')}.`, 'note'));
    }
    assignmentsTable(view, r);
    PD.table(view, `Trials per class and level of '${r.input.across_column}'`, ['class', ...r.levels],
      r.classes.map((c, i) => [{ text: c, cls: 'text', header: true }, ...r.cell_counts[i]]));
    PD.methods(view, res.methods);
    const items = [['Results (JSON)', `Save the results of run ${record.id} as JSON`, ex.json]];
    if (r.summary) items.push(['Assignments (CSV)', `Save the assignments of run ${record.id} as CSV`, () => ex.text('-assignments.csv', assignmentsCsv(r), 'text/csv')]);
    Object.keys(res.csv || {}).forEach((name) => items.push([`${name} (CSV)`, `Save the ${name} table of run ${record.id} as CSV`, () => ex.text(`-${name}.csv`, res.csv[name], 'text/csv')]));
    items.push(['Recipe', `Save the recipe of run ${record.id}`, ex.recipe]);
    PD.exportRow(view, items);
  };
}(window.PD));
