// The results view of the neuron analyses: the neuron-dropping curve, each neuron alone (with its shuffle p- and
// q-values when tested), weights and activation patterns, with the cautions (the winner's curse among them, from
// the report's warnings) and the one on reading weights. To add a figure or table, add an entry to FIGURES.
'use strict';
(function (PD) {
  const { el } = PD;

  const FIGURES = (res) => [
    { name: 'dropping', svg: res.plots.dropping, title: 'Neuron dropping', alt: 'Decoding score against the number of neurons, over random subsets' },
    { name: 'single', svg: res.plots.single, title: 'Each neuron alone', alt: 'Decoding score of each neuron alone, best first' },
    { name: 'weights', svg: res.plots.weights, title: 'Weights and patterns', alt: 'Decoder weights and activation patterns of every neuron' },
  ];

  // Each neuron alone, best first: the headline mean and its variability over repeats, and with shuffles the
  // neuron's own p-value, its Benjamini–Hochberg adjusted value across neurons and whether it is a discovery.
  function singleTable(view, r) {
    const score = r.headline === 'accuracy' ? 'accuracy' : 'balanced accuracy';
    const tested = r.fdr !== undefined && r.fdr !== null;
    const m = r.recipe.shuffles;
    const headings = ['neuron', `${score}, mean over repeats`, 'SD over repeats'];
    if (tested) headings.push('p (own shuffles)', 'q (adjusted across neurons)', `discovery at a false-discovery rate of ${r.fdr}?`);
    const rows = r.single.map((n) => {
      const s = n[r.headline];
      const row = [{ text: n.neuron, cls: 'text', header: true }, PD.pct(s.mean), PD.pct(s.sd)];
      if (tested) {
        row.push(PD.pBound(n.p_value, m), PD.pText(n.q_value),
          { text: n.discovery ? 'yes' : 'no', cls: 'text' });
      }
      return row;
    });
    PD.table(view, `Each neuron alone, best first (chance ${PD.pct(r.chance)}; SD is the variability over cross-validation repeats, ` +
      `not a confidence interval${tested ? '; q-values by Benjamini & Hochberg (1995)' : '; no shuffle test: tick “test each neuron alone against shuffled labels” for p-values'})`,
    headings, rows).classList.add('single');
  }

  PD.views.neurons = function (record, view, ex) {
    const res = record.result;
    PD.notes(view, res.report);
    PD.figures(view, FIGURES(res), ex);
    singleTable(view, res.report);
    if (res.plots.weights) {
      view.appendChild(el('p', 'Weights show how the decoder combines neurons; a neuron with no information of its own can ' +
        'get a large weight when it cancels noise it shares with informative neurons. Activation patterns (Haufe et al., ' +
        '2014) show how each neuron covaries with the decoder\'s output: read these, not the weights, as what a neuron carries.', 'note'));
    }
    PD.exportRow(view, [
      ['Neuron results (JSON)', `Save the neuron results of run ${record.id} as JSON`, ex.json],
      ['Recipe', `Save the recipe of run ${record.id}`, ex.recipe],
    ]);
  };
}(window.PD));
