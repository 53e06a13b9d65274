// The results view of the power analysis ("Plan the next recording"): how often subsamples of this recording,
// smaller in trials or neurons or with added noise neurons, decode the label significantly; the learning curve
// extrapolated beyond the recorded trials when it can be fitted. Figures and the table as CSV come from the core.
'use strict';
(function (PD) {
  const { el, pct } = PD;

  const FIGURES = (res) => [
    { name: 'trials', svg: res.plots.trials, title: 'Power against trials per class', alt: 'Power and accuracy against the number of trials per class, with the extrapolated learning curve' },
    { name: 'neurons', svg: res.plots.neurons, title: 'Power against neurons', alt: 'Power and accuracy against the number of recorded neurons kept' },
    { name: 'noise', svg: res.plots.noise, title: 'Power with noise neurons', alt: 'Power and accuracy against the number of uninformative neurons added' },
  ];

  function grid(view, caption, head, points, size) {
    if (!points.length) return;
    PD.table(view, caption, [head, 'subsamples', 'accuracy, mean', 'SD', 'significant', 'power'],
      points.map((p) => [{ text: String(size(p)), cls: 'text', header: true }, p.subsamples,
        pct(p.accuracy.mean), pct(p.accuracy.sd), p.significant, pct(p.power)]));
  }

  PD.views.power = function (record, view, ex) {
    const res = record.result;
    const r = res.report;
    view.appendChild(el('p', res.headline, 'headline'));
    PD.notes(view, r);
    const notes = el('ul', null, 'warnings');
    [r.spread, r.noise_simulation, r.extrapolation_note].filter((t) => t).forEach((t) => notes.appendChild(el('li', PD.pageWords(t), 'info')));
    view.appendChild(notes);
    view.appendChild(el('p', `Each subsample: ${r.protocol.folds === 'loo' ? 'leave-one-out' : r.protocol.folds + ' folds'}, ` +
      `${PD.count(r.protocol.repeats, 'repeat')} and ${PD.count(r.protocol.shuffles, 'label shuffle')}; significant when p ≤ ${r.alpha} ` +
      `(without information, ${pct(r.test_size)} of subsamples would be). ${r.class_counts.join('/')} trials per class, ` +
      `${r.recorded_neurons} neurons recorded; chance ${pct(r.chance)}.`, 'note'));
    PD.figures(view, FIGURES(res), ex);
    grid(view, 'Trials per class (every neuron; subsamples of the recorded trials): accuracy is the mean over subsamples, SD their spread, not a confidence interval', 'trials per class', r.trials, (p) => p.per_class);
    grid(view, 'Neurons kept (every trial; random subsets)', 'neurons', r.neurons, (p) => p.size);
    grid(view, 'Noise neurons added (every trial and neuron)', 'noise neurons', r.noise, (p) => p.added);
    if (r.extrapolation) {
      const x = r.extrapolation;
      PD.table(view, `Extrapolated learning curve (${x.model}; ${Math.round(100 * x.level)} % interval; a prediction of the fitted curve, not a measurement)`,
        ['trials per class', 'accuracy', 'low', 'high'], x.points.map((p) => [{ text: String(p.per_class), cls: 'text', header: true }, pct(p.accuracy), pct(p.low), pct(p.high)]));
    }
    PD.methods(view, res.methods);
    const items = [['Results (JSON)', `Save the results of run ${record.id} as JSON`, ex.json]];
    if (res.csv.power) items.push(['Power table (CSV)', `Save the power table of run ${record.id} as CSV`, () => ex.text('-power.csv', res.csv.power, 'text/csv')]);
    items.push(['Recipe', `Save the recipe of run ${record.id}`, ex.recipe]);
    PD.exportRow(view, items);
  };
}(window.PD));
