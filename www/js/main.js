// Start-up and wiring: compile the core, restore settings, connect every control to the part of the page that
// acts on it. Each change of data or settings re-checks the plan (check.js) and re-marks the records on view
// (records.js).
/* global wasm_bindgen */
'use strict';
(function (PD) {
  const { $ } = PD;
  const S = PD.state;

  async function init() {
    try {
      S.module = await PD.compileWasm();
      // Without the shared build (a copy of www/ that lacks it), workers keep a copy each, as on other hosts.
      if (PD.shared) S.sharedModule = await PD.compileSharedWasm().catch(() => { PD.shared = false; return null; });
      document.body.dataset.memory = PD.shared ? 'shared' : 'copies';
      await wasm_bindgen({ module_or_path: S.module });
      wasm_bindgen.start();
      $('version').textContent = wasm_bindgen.version();
    } catch (e) {
      PD.showError('data-error', 'The decoding core could not start in this browser: ' + e);
      return;
    }
    PD.restoreSettings();
    PD.setUpHelp();
    wire();
    PD.showKind();
    $('workers-info').textContent = PD.count(PD.poolSize(), 'worker') + ' on this computer' +
      (PD.shared ? ', sharing one copy of the data' : ', each with its own copy of the data');
    PD.refresh();
    document.body.dataset.ready = 'true';
  }

  function onFile(id, load) {
    $(id).addEventListener('change', async (e) => {
      const f = e.target.files[0];
      e.target.value = '';
      if (f) await load(f);
    });
  }

  function wire() {
    PD.on('data', PD.refresh);
    PD.on('settings', PD.refresh);
    onFile('file', (f) => PD.loadInto('table', f));
    onFile('nwb-file', (f) => PD.loadInto('nwb', f));
    onFile('events-file', (f) => PD.loadInto('events', f));
    onFile('trials-file', (f) => PD.loadInto('trials', f));
    const drop = $('drop');
    drop.addEventListener('dragover', (e) => { e.preventDefault(); drop.classList.add('over'); });
    drop.addEventListener('dragleave', () => drop.classList.remove('over'));
    drop.addEventListener('drop', async (e) => {
      e.preventDefault(); drop.classList.remove('over');
      await PD.loadDropped([...e.dataTransfer.files]);
    });
    $('example').addEventListener('click', PD.loadExample);
    $('example-events').addEventListener('click', PD.loadExample);
    $('example-study').addEventListener('click', PD.loadStudyExample);
    document.querySelectorAll('input[name=kind]').forEach((r) => r.addEventListener('change', () => PD.setKind(r.value)));
    $('unit-col').addEventListener('change', () => { PD.fillUnitFilter(); PD.refresh(); });
    ['label', 'group', 'pseudo', 'trial-col', 'time-col', 'neuron-col', 'align-col', 'unit-op', 'unit-value', ...PD.SETTING_IDS]
      .forEach((id) => {
        $(id).addEventListener('change', PD.refresh);
        if ($(id).tagName === 'INPUT' && $(id).type === 'text') $(id).addEventListener('input', PD.refresh);
      });
    $('feature-filter').addEventListener('input', (e) => PD.setFeatureFilter(e.target.value));
    $('features-all').addEventListener('click', () => PD.chooseMatching(true));
    $('features-none').addEventListener('click', () => PD.chooseMatching(false));
    // detail === 0: the button was pressed from the keyboard (Enter or Space), so focus follows the results.
    $('start').addEventListener('click', (e) => PD.start('main', e.detail === 0));
    $('compare-start').addEventListener('click', (e) => PD.start('compare', e.detail === 0));
    $('neurons-start').addEventListener('click', (e) => PD.start('neurons', e.detail === 0));
    $('cancel').addEventListener('click', PD.cancel);
    $('save-recipe').addEventListener('click', () => {
      const { recipe } = PD.readRecipe();
      const file = PD.currentFiles()[0];
      PD.download(`${PD.stem(file ? file.name : 'settings')}.recipe.json`, JSON.stringify(recipe, null, 2) + '\n', 'application/json');
    });
    $('recipe-file').addEventListener('change', async (e) => {
      const f = e.target.files[0];
      e.target.value = '';
      if (!f) return;
      try {
        const note = PD.applyRecipe(PD.checkRecipe(await f.text()));
        $('recipe-status').textContent = `Loaded ${f.name}.${note}`;
        PD.refresh();
      } catch (err) {
        $('recipe-status').textContent = `${f.name} could not be loaded: ${PD.pageWords(err)}`;
      }
    });
  }

  window.addEventListener('DOMContentLoaded', init);
}(window.PD));
