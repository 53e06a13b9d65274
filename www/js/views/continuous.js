// The results view of continuous decoding ("Decode a continuous variable"): the number decoded (ridge) or the
// angle (circular ridge), its score over repeats against shuffled values, the penalty chosen inside each training
// fold, the predictions' figure, and over time the curve with its clusters. Figures come from the core (FIGURES);
// predictions and the curve as CSV come from the core too (result.csv).
'use strict';
(function (PD) {
  const { el } = PD;

  const FIGURES = (res) => [
    { name: 'predicted', svg: res.plots.predicted, title: 'Predicted against actual', alt: 'Each trial\'s predicted value against its actual value, first repeat' },
    { name: 'scores', svg: res.plots.scores, title: 'Scores over repeats', alt: 'Distribution of the score over repeats' },
    { name: 'null', svg: res.plots.null, title: 'Shuffle null', alt: 'Shuffle null distribution with the observed score' },
    { name: 'curve', svg: res.plots.curve, title: 'Score over time', alt: 'Score at each time window with its shuffle null and clusters' },
  ];

  const SCORE_WORDS = { r2: 'out-of-sample R²', correlation: 'Pearson correlation' };
  // Three decimals as in the command line's text (a null R² near 0 reads 0.000, not -7.16e-5 or -0.000).
  const num = (v) => {
    if (v === null || v === undefined) return '—';
    const s = Number(v).toFixed(3);
    return s === '-0.000' ? '0.000' : s;
  };
  // A value of the decoded variable in its own units: four significant digits, no exponent (the methods' rule).
  const quantity = (v) => {
    if (v === null || v === undefined) return '—';
    const x = Number(v);
    if (x === 0) return '0';
    return x.toFixed(Math.min(12, Math.max(0, 3 - Math.floor(Math.log10(Math.abs(x))))));
  };

  // An angle's scores named as the command line names them, its error in the angle's unit.
  const CIRCULAR_WORDS = { r2: 'R² of (cosine, sine)', correlation: 'circular correlation', angular_error: 'mean absolute angular error' };
  const wordsOf = (r) => (r.target && r.target.variable !== 'linear' ? CIRCULAR_WORDS : SCORE_WORDS);
  const valueOf = (r, name) => {
    const unit = r.target && r.target.variable !== 'linear' && name === 'angular_error' ? (r.target.unit === 'degrees' ? '°' : ' rad') : '';
    return (v) => (v === null || v === undefined ? '—' : num(v) + unit);
  };

  function scoreTable(view, r) {
    if (!r.summary) return;
    const words = wordsOf(r);
    const rows = Object.entries(r.summary).filter(([, v]) => v && v.mean !== undefined)
      .map(([name, v]) => { const f = valueOf(r, name); return [{ text: words[name] || name.replace(/_/g, ' '), cls: 'text', header: true }, f(v.mean), f(v.sd), f(v.p2_5), f(v.p97_5)]; });
    PD.table(view, 'Scores over repeats (mean, SD and percentiles over repeats: a spread over resampling, not a confidence interval)',
      ['', 'mean', 'SD', '2.5th percentile', '97.5th percentile'], rows);
    const s = r.shuffle;
    if (s && s.p_value !== null && s.p_value !== undefined) {
      const how = `${s.count} shuffles × ${s.repeats_each} repeats${s.within_groups ? ', within groups' : ''}`;
      const f = valueOf(r, s.score);
      PD.table(view, 'The shuffle control (the values shuffled across trials)', ['', 'value', 'from'], [
        [{ text: `observed ${words[s.score] || s.score.replace(/_/g, ' ')}`, cls: 'text', header: true }, f(s.observed), { text: `mean over ${r.repeats.length} repeats`, cls: 'text' }],
        [{ text: 'shuffled values, mean (SD)', cls: 'text', header: true }, `${f(s.null_mean)} (${f(s.null_sd)})`, { text: how, cls: 'text' }],
        [{ text: 'shuffled values, 95th percentile', cls: 'text', header: true }, f(s.null_p95), { text: how, cls: 'text' }],
        [{ text: 'p (observed against shuffles)', cls: 'text', header: true }, PD.pBound(s.p_value, s.count), { text: how, cls: 'text' }],
      ]);
    }
  }

  PD.views.continuous = function (record, view, ex) {
    const res = record.result;
    const r = res.report;
    view.appendChild(el('p', res.headline, 'headline'));
    PD.notes(view, r);
    PD.figures(view, FIGURES(res), ex);
    const t = r.target;
    view.appendChild(el('p', `'${t.column}': ${t.variable === 'linear' ? 'a quantity' : `an angle in ${t.unit}`}, from ${quantity(t.min)} to ${quantity(t.max)}` +
      (t.mean !== null && t.mean !== undefined ? `, mean ${quantity(t.mean)} (SD ${quantity(t.sd)})` : '') +
      (t.mean_direction !== null && t.mean_direction !== undefined ? `, mean direction ${num(t.mean_direction)}${t.unit === 'degrees' ? '°' : ' rad'} (resultant length ${num(t.resultant_length)})` : '') +
      `; ${r.input.trials} trials, ${r.input.features.length} features.`, 'note'));
    scoreTable(view, r);
    const used = r.penalty.chosen.filter((c) => c.fits > 0).map((c) => `${c.alpha} in ${PD.count(c.fits, 'fit')}`);
    view.appendChild(el('p', `Penalty chosen inside each training fold (nested cross-validation over ${r.penalty.grid.join(', ')}): ${used.join('; ')}.`, 'note'));
    PD.methods(view, res.methods);
    const items = [['Results (JSON)', `Save the results of run ${record.id} as JSON`, ex.json]];
    Object.keys(res.csv || {}).forEach((name) => items.push([`${name === 'predictions' ? 'Predictions' : name === 'curve' ? 'Curve' : name} (CSV)`,
      `Save the ${name} of run ${record.id} as CSV`, () => ex.text(`-${name}.csv`, res.csv[name], 'text/csv')]));
    items.push(['Recipe', `Save the recipe of run ${record.id}`, ex.recipe]);
    PD.exportRow(view, items);
  };
}(window.PD));
