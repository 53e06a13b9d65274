// The results view of a time course: headline, notes, onset, clusters, the decoding curve and the temporal
// generalization matrix, the caution about clusters, methods, exports. To add a table or figure from a new report
// field, add an entry to TABLES or FIGURES below.
'use strict';
(function (PD) {
  const { el } = PD;

  const FIGURES = (res) => [
    { name: 'curve', svg: res.plots.curve, title: 'Decoding over time', alt: 'Decoding score over time with the shuffle null and significant clusters' },
    { name: 'generalization', svg: res.plots.generalization, title: 'Temporal generalization', alt: 'Temporal generalization matrix, training time by testing time' },
  ];

  const TABLES = [
    (view, r) => {
      const rows = r.clusters.map((c) => ['time course', `${c.start} to ${c.end} s`, '', c.mass.toFixed(3), PD.pBound(c.p_value, r.shuffle.count), c.significant ? 'significant' : '']);
      if (r.generalization) {
        // The matrix has many small chance clusters: list the significant ones and count the rest.
        const g = r.generalization.clusters;
        g.filter((c) => c.significant).forEach((c) => rows.push(['generalization', `${c.train_start} to ${c.train_end} s`,
          `${c.test_start} to ${c.test_end} s`, c.mass.toFixed(3), PD.pBound(c.p_value, r.shuffle.count), 'significant']));
        const rest = g.filter((c) => !c.significant);
        if (rest.length) {
          rows.push([`generalization: ${rest.length} more, none significant`, '', '', Math.max(...rest.map((c) => c.mass)).toFixed(3),
            PD.pText(Math.min(...rest.map((c) => c.p_value))), '']);
        }
      }
      if (!rows.length) return;
      PD.table(view, 'Clusters of windows', ['clusters', 'trained (window centres)', 'tested', 'mass', 'p', 'significant?'],
        rows.map((row) => row.map((c, i) => (i < 3 || i === 5 ? { text: c, cls: 'text' } : c))));
    },
  ];

  PD.views.time = function (record, view, ex) {
    const res = record.result;
    const r = res.report;
    view.appendChild(el('p', res.headline, 'headline'));
    PD.notes(view, r);
    view.appendChild(el('p', r.onset
      ? `Onset: ${r.onset.time} s, the centre of the first window of the earliest significant cluster (which starts at ${r.onset.window_start} s; approximate: a cluster test does not date an onset precisely).`
      : (r.shuffle.count ? 'No significant cluster, so no onset.' : 'No shuffles were run, so nothing is tested.')));
    PD.figures(view, FIGURES(res), ex);
    TABLES.forEach((t) => t(view, r));
    // The matrix's own caveat depends on its null and is among the report's warnings above.
    view.appendChild(el('p', 'Significance is cluster-corrected over all windows (and over the whole matrix for temporal ' +
      'generalization): a significant cluster shows information somewhere inside it, not at each of its windows, and does ' +
      'not date an onset precisely.' + (r.generalization ? ` The generalization matrix was tested against a ${
        PD.NULL_WORDS[r.generalization.null_method].replace(/^null of the generalization matrix: /, 'null with ')}.` : ''), 'note'));
    PD.methods(view, res.methods);
    const items = [
      ['Results (JSON)', `Save the results of run ${record.id} as JSON`, ex.json],
      ['Curve (CSV)', `Save the decoding curve of run ${record.id} as CSV`, () => ex.text('-curve.csv', res.csv.curve, 'text/csv')],
    ];
    if (res.csv.generalization) {
      items.push(['Generalization matrix (CSV)', `Save the temporal generalization matrix of run ${record.id} as CSV`,
        () => ex.text('-generalization.csv', res.csv.generalization, 'text/csv')]);
    }
    items.push(['Recipe', `Save the recipe of run ${record.id}`, ex.recipe]);
    PD.exportRow(view, items);
  };
}(window.PD));
