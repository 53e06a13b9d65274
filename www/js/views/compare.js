// The results view of the exploratory comparison of decoders: one row per decoder with the headline score's mean
// and SD over repeats (or the peak over time), under the warning that picking the best of them is a choice made on
// test data.
'use strict';
(function (PD) {
  const { el, pct } = PD;

  PD.views.compare = function (record, view, ex) {
    const rows = record.result.rows;
    view.appendChild(el('p', 'Exploratory only. Picking the decoder that scores best here chooses it by its test accuracy, ' +
      'which is leakage: the winning score is biased upwards. Report a decoder chosen beforehand, or let the settings be ' +
      'chosen inside the training folds (“Choose settings inside each training fold”).', 'warning'));
    const time = rows.some((x) => x.report && x.report.windows);
    const score = (r) => (r.design.headline === 'accuracy' ? 'accuracy' : 'balanced_accuracy');
    const body = rows.map((x) => {
      const name = { text: PD.DECODER_NAMES[x.classifier], cls: 'text', header: true };
      if (x.error) return [name, { text: 'not run: ' + PD.pageWords(x.error), cls: 'text', span: 3 }];
      const r = x.report;
      if (time) {
        const curve = r.windows.map((w) => w[score(r)].mean);
        const best = Math.max(...curve);
        return [name, pct(best), { text: `${score(r).replace('_', ' ')} at ${r.windows[curve.indexOf(best)].time} s`, cls: 'text' }, ''];
      }
      const h = r.summary[score(r)];
      return [name, pct(h.mean), pct(h.sd), { text: score(r).replace('_', ' '), cls: 'text' }];
    });
    PD.table(view, `Decoders side by side (${record.recipe.repeats} repeats each, no shuffles)`,
      time ? ['decoder', 'peak score, mean over repeats', 'score and time of the peak', ''] : ['decoder', 'score, mean over repeats', 'score, SD over repeats (not a confidence interval)', 'score'],
      body);
    // Each decoder's cautions, said once with the decoders they concern.
    const cautions = new Map();
    rows.filter((x) => x.report).forEach((x) => (x.report.warnings || []).forEach((w) => {
      cautions.set(w, [...(cautions.get(w) || []), PD.DECODER_NAMES[x.classifier]]);
    }));
    if (cautions.size) {
      const ul = el('ul', null, 'warnings');
      cautions.forEach((names, w) => ul.appendChild(el('li', `${PD.pageWords(w)} (${names.length === rows.length ? 'every decoder' : names.join(', ')})`)));
      view.appendChild(ul);
    }
    const csv = ['decoder,score,mean,sd'].concat(rows.filter((x) => x.report && !time).map((x) => {
      const h = x.report.summary[score(x.report)];
      return `${x.classifier},${score(x.report)},${h.mean},${h.sd}`;
    })).join('\n') + '\n';
    const items = [];
    if (!time) items.push(['Comparison (CSV)', `Save the comparison of run ${record.id} as CSV`, () => ex.text('-decoders.csv', csv, 'text/csv')]);
    items.push(['Recipe', `Save the recipe of run ${record.id}`, ex.recipe]);
    PD.exportRow(view, items);
  };
}(window.PD));
