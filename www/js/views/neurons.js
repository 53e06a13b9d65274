// The results view of the neuron analyses: the neuron-dropping curve, each neuron alone, weights and activation
// patterns, with the caution on reading weights. To add a figure or table, add an entry to FIGURES.
'use strict';
(function (PD) {
  const { el } = PD;

  const FIGURES = (res) => [
    { name: 'dropping', svg: res.plots.dropping, title: 'Neuron dropping', alt: 'Decoding score against the number of neurons, over random subsets' },
    { name: 'single', svg: res.plots.single, title: 'Each neuron alone', alt: 'Decoding score of each neuron alone, best first' },
    { name: 'weights', svg: res.plots.weights, title: 'Weights and patterns', alt: 'Decoder weights and activation patterns of every neuron' },
  ];

  PD.views.neurons = function (record, view, ex) {
    const res = record.result;
    PD.notes(view, res.report);
    PD.figures(view, FIGURES(res), ex);
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
