// The results view of a trial-table decoding: headline, notes, score table (chance and the binomial threshold, the
// shuffle control), figures, per-class recall, methods, exports. To add a table or figure from a new report field,
// add an entry to TABLES or FIGURES below (each reads record.result only).
'use strict';
(function (PD) {
  const { el, pct } = PD;

  const FIGURES = (res) => [
    { name: 'scores', svg: res.plots.scores, title: 'Scores over repeats', alt: 'Distribution of the decoding score over repeats' },
    { name: 'null', svg: res.plots.null, title: 'Shuffle null', alt: 'Shuffle null distribution with the observed score' },
    { name: 'confusion', svg: res.plots.confusion, title: 'Confusion matrix', alt: 'Confusion matrix as a heatmap, rows are true classes' },
  ];

  const TABLES = [
    (view, r) => {
      const s = r.shuffle;
      const rows = [['accuracy', r.summary.accuracy], ['balanced accuracy', r.summary.balanced_accuracy]]
        .map(([name, v]) => [{ text: name, cls: 'text', header: true }, pct(v.mean), pct(v.sd), pct(v.p2_5), pct(v.p97_5)]);
      PD.table(view, 'Scores over repeats (mean, SD and percentiles over repeats: a spread over resampling, not a confidence interval)',
        ['', 'mean', 'SD', '2.5th percentile', '97.5th percentile'], rows);
    },
    // Chance and the shuffle control in a table of their own: each value under its own heading, never a merged
    // cell under a percentile's heading.
    (view, r) => {
      const s = r.shuffle;
      const rows = [
        [{ text: 'chance level', cls: 'text', header: true }, pct(r.chance.level), { text: `1 / ${r.classes.length} classes`, cls: 'text' }],
        [{ text: 'binomial threshold', cls: 'text', header: true }, pct(r.chance.threshold),
          { text: `binomial, α = ${r.chance.alpha}, ${r.chance.test_trials} test trials`, cls: 'text' }],
      ];
      if (s.p_value !== null) {
        const how = `${s.count} shuffles × ${s.repeats_each} repeats${s.within_groups ? ', within groups' : ''}`;
        rows.push([{ text: 'shuffled labels, mean (SD)', cls: 'text', header: true }, `${pct(s.null_mean)} (${pct(s.null_sd)})`, { text: how, cls: 'text' }]);
        rows.push([{ text: 'shuffled labels, 95th percentile', cls: 'text', header: true }, pct(s.null_p95), { text: how, cls: 'text' }]);
        rows.push([{ text: 'p (observed against shuffles)', cls: 'text', header: true }, s.p_value.toPrecision(3), { text: `observed ${pct(s.observed)}`, cls: 'text' }]);
      }
      PD.table(view, 'Chance and the shuffle control', ['', 'value', 'from'], rows);
    },
    (view, r) => PD.table(view, 'Per-class recall (mean over repeats)', ['class', 'trials', 'recall'],
      r.classes.map((c, i) => [{ text: c, cls: 'text' }, r.class_counts[i], pct(r.summary.recall[i])])),
  ];

  function scoresCsv(r) {
    const q = (s) => '"' + String(s).replace(/"/g, '""') + '"';
    const lines = ['kind,index,accuracy,balanced_accuracy'];
    r.repeats.forEach((x) => lines.push(`repeat,${x.index},${x.accuracy},${x.balanced_accuracy}`));
    r.shuffle.null.forEach((v, j) => lines.push(`shuffle,${j},${r.design.headline === 'accuracy' ? v : ''},${r.design.headline === 'accuracy' ? '' : v}`));
    lines.push('', 'true class,' + r.classes.map(q).join(','));
    r.summary.confusion.forEach((row, i) => lines.push(q(r.classes[i]) + ',' + row.join(',')));
    return lines.join('\n') + '\n';
  }

  PD.views.table = function (record, view, ex) {
    const res = record.result;
    const r = res.report;
    view.appendChild(el('p', res.headline, 'headline'));
    PD.notes(view, r);
    PD.figures(view, FIGURES(res), ex);
    TABLES.forEach((t) => t(view, r));
    PD.methods(view, res.methods);
    PD.exportRow(view, [
      ['Results (JSON)', `Save the results of run ${record.id} as JSON`, ex.json],
      ['Scores (CSV)', `Save the scores of run ${record.id} as CSV`, () => ex.text('-scores.csv', scoresCsv(r), 'text/csv')],
      ['Recipe', `Save the recipe of run ${record.id}`, ex.recipe],
    ]);
  };
}(window.PD));
