// The results view of a study ("Compare sessions and animals"): the group result (mean across subjects or
// sessions with its interval, the group permutation test, prevalence, the t-test with its caution), every session's
// score, the sessions left out with the reason, and over time the group curve; a pooled study shows the pooled
// population's result. Figures and the sessions' CSV come from the core (result.plots, result.csv).
'use strict';
(function (PD) {
  const { el, pct } = PD;

  const FIGURES = (res) => [
    { name: 'sessions', svg: res.plots.sessions, title: 'Every session', alt: 'Each session\'s decoding score with its shuffle null, grouped by subject' },
    { name: 'group_curve', svg: res.plots.group_curve, title: 'Group curve over time', alt: 'Group mean score at each time window with the group null and clusters' },
    { name: 'scores', svg: res.plots.scores, title: 'Scores over repeats', alt: 'Distribution of the pooled population\'s score over repeats' },
    { name: 'null', svg: res.plots.null, title: 'Shuffle null', alt: 'Shuffle null distribution with the pooled population\'s score' },
    { name: 'confusion', svg: res.plots.confusion, title: 'Confusion matrix', alt: 'Confusion matrix of the pooled population, rows are true classes' },
    { name: 'curve', svg: res.plots.curve, title: 'Pooled curve over time', alt: 'Pooled population\'s score at each time window' },
  ];


  function groupTable(view, r) {
    const g = r.group;
    if (!g) return;
    const rows = [[{ text: `mean across ${g.units} ${g.level === 'subject' ? 'subjects' : 'sessions'}`, cls: 'text', header: true }, pct(g.mean),
      { text: `SD ${pct(g.sd)}` + (g.interval ? `; ${Math.round(100 * g.interval.level)} % ${g.interval.kind}: ${pct(g.interval.low)}–${pct(g.interval.high)}` : ''), cls: 'text' }],
    [{ text: 'chance', cls: 'text', header: true }, pct(g.chance), { text: '', cls: 'text' }]];
    if (g.p_value !== null) {
      rows.push([{ text: 'group permutation test, p', cls: 'text', header: true }, PD.pBound(g.p_value, g.draws),
        { text: `${g.draws} draws from the sessions' shuffles; null mean ${pct(g.null_mean)}, 95th percentile ${pct(g.null_p95)}`, cls: 'text' }]);
    }
    if (r.prevalence) {
      const v = r.prevalence;
      rows.push([{ text: 'prevalence, global null p', cls: 'text', header: true }, PD.pBound(v.global_p, g.draws),
        { text: v.gamma0 !== null ? `at least ${pct(v.gamma0)} of the population carries the information (α = ${v.alpha})` : 'no prevalence above 0 can be claimed', cls: 'text' }]);
    }
    if (r.t_test) rows.push([{ text: 't-test against chance, p', cls: 'text', header: true }, PD.pText(r.t_test.p_value), { text: `t = ${r.t_test.t.toFixed(2)}, ${r.t_test.df} df`, cls: 'text' }]);
    PD.table(view, 'The group', ['', 'value', 'details'], rows);
  }

  function sessionsTable(view, r) {
    // The score every statistic is of: the headline (accuracy, or balanced accuracy without balancing); `r.score`
    // says it in words (over time, averaged over the windows; across conditions, of the decoder carried over).
    const score = (s) => s[r.headline];
    PD.table(view, `Every session (score: ${r.score}; mean ± SD over repeats, a spread over resampling, not a confidence interval)`,
      ['session', 'subject', 'trials', 'neurons', 'score', 'p'],
      r.sessions.map((s) => [{ text: s.session, cls: 'text', header: true }, { text: s.subject || '—', cls: 'text' }, s.trials, s.neurons,
        score(s) ? `${pct(score(s).mean)} ± ${pct(score(s).sd)}` : '—', PD.pBound(s.p_value, r.recipe.shuffles)]));
    if (r.left_out.length) {
      PD.table(view, 'Sessions left out', ['session', 'subject', 'reason'],
        r.left_out.map((l) => [{ text: l.session, cls: 'text', header: true }, { text: l.subject || '—', cls: 'text' }, { text: PD.pageWords(l.reason), cls: 'text' }]));
    }
  }

  PD.views.study = function (record, view, ex) {
    const res = record.result;
    const r = res.report;
    view.appendChild(el('p', res.headline, 'headline'));
    PD.notes(view, r);
    if (r.t_test && r.t_test.caution) view.appendChild(el('p', PD.pageWords(r.t_test.caution), 'note'));
    PD.figures(view, FIGURES(res), ex);
    groupTable(view, r);
    sessionsTable(view, r);
    PD.methods(view, res.methods);
    const items = [['Results (JSON)', `Save the results of run ${record.id} as JSON`, ex.json]];
    Object.keys(res.csv || {}).forEach((name) => items.push([`${name === 'sessions' ? 'Sessions' : name.replace('_', ' ')} (CSV)`,
      `Save the ${name.replace('_', ' ')} table of run ${record.id} as CSV`, () => ex.text(`-${name}.csv`, res.csv[name], 'text/csv')]));
    items.push(['Recipe', `Save the recipe of run ${record.id}`, ex.recipe]);
    PD.exportRow(view, items);
  };
}(window.PD));
