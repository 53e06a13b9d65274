// One decoding worker: its own wasm instance, running tasks (repeat i / shuffle j) the pool hands it, for a trial
// table or a time course.
// Served page: the wasm-bindgen glue is loaded with importScripts. Offline file: the glue is concatenated in
// front of this script inside a Blob, so `wasm_bindgen` already exists.
/* global wasm_bindgen, importScripts */
'use strict';
if (typeof wasm_bindgen === 'undefined') {
  importScripts('pkg/popdecode.js');
}
let runner = null;
let mode = 'table';

function failure(e) {
  // A trap (RuntimeError) means a bug in the core: report the panic message it recorded.
  let message = String(e && e.message !== undefined ? e.message : e);
  if (e instanceof WebAssembly.RuntimeError) {
    let detail = '';
    try { detail = wasm_bindgen.last_panic(); } catch (_) { /* instance unusable */ }
    message = 'internal error in the decoding core' + (detail ? ': ' + detail : ' (' + message + ')');
  }
  return message;
}

self.onmessage = async (event) => {
  const msg = event.data;
  try {
    if (msg.type === 'init') {
      await wasm_bindgen({ module_or_path: msg.module });
      wasm_bindgen.start();
      mode = msg.mode;
      if (mode === 'time') runner = new wasm_bindgen.TimeRunner(...msg.files, msg.recipe);
      else if (mode === 'neurons') runner = new wasm_bindgen.NeuronsRunner(msg.files[0], msg.files[1], msg.recipe, msg.extra);
      else runner = new wasm_bindgen.Runner(msg.files[0], msg.files[1], msg.recipe);
      self.postMessage({ type: 'ready' });
    } else if (msg.type === 'task') {
      const outcome = mode === 'neurons' ? runner.run(JSON.stringify(msg.task)) : runner.run(msg.task.kind, msg.task.index);
      self.postMessage({ type: 'done', id: msg.id, outcome });
    }
  } catch (e) {
    self.postMessage({ type: 'error', message: failure(e) });
  }
};
