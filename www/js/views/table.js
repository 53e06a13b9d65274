// The results view of a trial-table decoding: headline, cautions, score table (the mean with its 95 % confidence
// interval, and apart from it the variability over cross-validation repeats), effect size, chance and the shuffle
// control, figures, per-class recall with its p-values, pairwise decoding, methods, exports. To add a table or
// figure from a new report field, add an entry to TABLES or FIGURES below (each reads record.result only).
'use strict';
(function (PD) {
  const { el, pct } = PD;

  const FIGURES = (res) => [
    { name: 'scores', svg: res.plots.scores, title: 'Scores over repeats', alt: 'Distribution of the decoding score over cross-validation repeats' },
    { name: 'null', svg: res.plots.null, title: 'Shuffle null', alt: 'Shuffle null distribution with the observed score' },
    { name: 'confusion', svg: res.plots.confusion, title: 'Confusion matrix', alt: 'Confusion matrix as a heatmap, rows are true classes' },
    { name: 'pairwise', svg: res.plots.pairwise, title: 'Pairwise decoding', alt: 'Heatmap of the decoding score of every pair of classes, each pair decoded on its own' },
  ];

  const head = (text) => ({ text, cls: 'text', header: true });
  const words = (text) => ({ text, cls: 'text' });
  const range = (ci) => (ci ? `${pct(ci[0])} to ${pct(ci[1])}` : '—');
  const SCORE_WORDS = { accuracy: 'accuracy', balanced_accuracy: 'balanced accuracy' };

  // Every distinct way a confidence interval in the report was computed, in order.
  function ciMethods(spreads) {
    return [...new Set(spreads.filter((s) => s && s.ci_method).map((s) => s.ci_method))];
  }

  const TABLES = [
    // The mean with its confidence interval first; the spread over repeats in columns of its own, named as such.
    (view, r) => {
      const s = r.summary;
      const rows = [['accuracy', s.accuracy], ['balanced accuracy', s.balanced_accuracy]];
      if (s.auc) rows.push(['area under the ROC curve', s.auc]);
      const t = PD.table(view, 'Scores: mean over cross-validation repeats with its 95 % confidence interval; SD and ' +
        'percentiles are the variability over those repeats (how the trials were split), not a confidence interval',
      ['', 'mean', '95 % confidence interval', 'SD over repeats', '2.5th percentile over repeats', '97.5th percentile over repeats'],
      rows.map(([name, v]) => [head(name), pct(v.mean), words(range(v.ci)), pct(v.sd), pct(v.p2_5), pct(v.p97_5)]));
      t.classList.add('scores');
      const methods = ciMethods([s.accuracy, s.balanced_accuracy]);
      const notes = el('ul', null, 'notes');
      methods.forEach((m) => notes.appendChild(el('li', `95 % confidence interval of the mean: ${m}.`, 'ci-method')));
      if (s.auc) {
        notes.appendChild(el('li', `Area under the ROC curve: ${s.auc_pooling}${s.auc.ci ? '' : '; no confidence interval is computed for it'}.`));
      }
      if (notes.children.length) view.appendChild(notes);
    },
    (view, r) => {
      const e = r.summary.effect_size;
      if (!e) return;
      PD.table(view, `Effect size of the ${SCORE_WORDS[e.score]} above chance (${pct(r.chance.level)})`, ['', 'value', '95 % confidence interval', 'what it is'], [
        [head('above chance'), `${(100 * e.above_chance).toFixed(1)} points`,
          words(`${(100 * e.above_chance_ci[0]).toFixed(1)} to ${(100 * e.above_chance_ci[1]).toFixed(1)} points`), words(`mean ${SCORE_WORDS[e.score]} minus chance, in percentage points`)],
        [head('κ (chance-corrected)'), e.kappa.toFixed(3), words(`${e.kappa_ci[0].toFixed(3)} to ${e.kappa_ci[1].toFixed(3)}`),
          words("(score − chance) / (1 − chance): 0 at chance, 1 for perfect decoding; Cohen's κ (Cohen, 1960) when test sets are balanced")],
      ]);
    },
    // Chance and the shuffle control in a table of their own: each value under its own heading, never a merged
    // cell under a percentile's heading.
    (view, r) => {
      const s = r.shuffle;
      const rows = [
        [head('chance level'), pct(r.chance.level), words(`1 / ${r.classes.length} classes`)],
        [head('binomial threshold'), pct(r.chance.threshold), words(`binomial, α = ${r.chance.alpha}, ${r.chance.test_trials} test trials`)],
      ];
      if (s.p_value !== null) {
        const how = `${s.count} shuffles × ${s.repeats_each} repeats${s.within_groups ? ', within groups' : ''}`;
        rows.push([head('shuffled labels, mean (SD)'), `${pct(s.null_mean)} (${pct(s.null_sd)})`, words(how)]);
        rows.push([head('shuffled labels, 95th percentile'), pct(s.null_p95), words(how)]);
        rows.push([head('p (observed against shuffles)'), PD.pBound(s.p_value, s.count), words(`observed ${pct(s.observed)}`)]);
      }
      PD.table(view, 'Chance and the shuffle control', ['', 'value', 'from'], rows);
    },
    (view, r) => {
      const ps = r.shuffle.recall_p_values;
      const headings = ['class', 'trials', 'recall (mean over repeats)'];
      if (ps) headings.push('p (recall against shuffles)');
      PD.table(view, ps ? 'Per-class recall, each with its own shuffle p-value (one test per class, not corrected across classes)'
        : 'Per-class recall (mean over repeats)', headings,
      r.classes.map((c, i) => {
        const row = [words(c), r.class_counts[i], pct(r.summary.recall[i])];
        if (ps) row.push(PD.pBound(ps[i], r.shuffle.count));
        return row;
      })).classList.add('recall');
    },
    (view, r) => {
      const pw = r.pairwise;
      if (!pw) return;
      const tested = pw.fdr !== undefined && pw.fdr !== null;
      // The score in the heading when every pair leads with the same one, else in a column of its own.
      const one = pw.pairs.every((p) => p.headline === pw.pairs[0].headline) ? SCORE_WORDS[pw.pairs[0].headline] : null;
      const headings = ['pair of classes', ...(one ? [] : ['score']), `${one || 'score'}, mean over repeats`, '95 % confidence interval', 'AUC, mean over repeats'];
      if (tested) headings.push('p (own shuffles)', 'q (adjusted across pairs)', `discovery at a false-discovery rate of ${pw.fdr}?`);
      const rows = pw.pairs.map((p) => {
        const s = p[p.headline];
        const row = [head(`${p.classes[0]} vs ${p.classes[1]}`), ...(one ? [] : [words(SCORE_WORDS[p.headline])]), pct(s.mean), words(range(s.ci)), p.auc ? pct(p.auc.mean) : '—'];
        if (tested) row.push(PD.pBound(p.p_value, r.shuffle.count), PD.pText(p.q_value), words(p.discovery ? 'yes' : 'no'));
        return row;
      });
      PD.table(view, 'Pairwise decoding: each pair of classes decoded on its own with the same settings (chance 50 %)' +
        (tested ? '; q-values by Benjamini & Hochberg (1995)' : ''), headings, rows).classList.add('pairwise');
    },
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

  // One row per pair, every number of the pairwise section.
  function pairwiseCsv(r) {
    const q = (s) => '"' + String(s).replace(/"/g, '""') + '"';
    const v = (x) => (x === null || x === undefined ? '' : x);
    const lines = ['class_a,class_b,headline,mean,ci_low,ci_high,sd_over_repeats,auc_mean,p_value,q_value,discovery'];
    r.pairwise.pairs.forEach((p) => {
      const s = p[p.headline];
      lines.push([q(p.classes[0]), q(p.classes[1]), p.headline, s.mean, s.ci ? s.ci[0] : '', s.ci ? s.ci[1] : '', s.sd,
        p.auc ? p.auc.mean : '', v(p.p_value), v(p.q_value), v(p.discovery)].join(','));
    });
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
    const items = [
      ['Results (JSON)', `Save the results of run ${record.id} as JSON`, ex.json],
      ['Scores (CSV)', `Save the scores of run ${record.id} as CSV`, () => ex.text('-scores.csv', scoresCsv(r), 'text/csv')],
    ];
    if (r.pairwise) {
      items.push(['Pairwise (CSV)', `Save the pairwise decoding of run ${record.id} as CSV`, () => ex.text('-pairwise.csv', pairwiseCsv(r), 'text/csv')]);
    }
    items.push(['Recipe', `Save the recipe of run ${record.id}`, ex.recipe]);
    PD.exportRow(view, items);
  };
}(window.PD));
