// The wasm core and the page's workers: compiling the module once, making workers (from worker.js when served,
// from Blob URLs in the offline file), the pool size, and the data worker that holds the loaded files.
/* global wasm_bindgen */
'use strict';
(function (PD) {
  PD.compileWasm = async function () {
    if (window.POPDECODE_WASM_BASE64) {
      const bin = atob(window.POPDECODE_WASM_BASE64);
      const bytes = new Uint8Array(bin.length);
      for (let i = 0; i < bin.length; i++) bytes[i] = bin.charCodeAt(i);
      return WebAssembly.compile(bytes);
    }
    const response = await fetch('pkg/popdecode_bg.wasm');
    return WebAssembly.compile(await response.arrayBuffer());
  };

  let workerUrl = null;
  PD.makeWorker = function () {
    if (window.POPDECODE_OFFLINE) {
      if (!workerUrl) {
        const src = PD.$('glue-src').textContent + '\n' + PD.$('worker-src').textContent;
        workerUrl = URL.createObjectURL(new Blob([src], { type: 'text/javascript' }));
      }
      return new Worker(workerUrl);
    }
    return new Worker('worker.js');
  };

  PD.poolSize = function () {
    const asked = Number(new URLSearchParams(location.search).get('workers'));
    if (Number.isInteger(asked) && asked > 0) return Math.min(asked, 32);
    return Math.max(1, Math.min(navigator.hardwareConcurrency || 2, 16));
  };

  // The data worker: one per loaded data set. It reads the files (never the main thread), inspects them, keeps
  // them decoded for the current columns, prepares plans, hands the decoded matrix to run workers and finishes
  // runs. Requests are answered in order of arrival; each returns a promise.
  PD.DataWorker = class {
    constructor(module) {
      this.worker = PD.makeWorker();
      this.pending = new Map();
      this.next = 1;
      this.dead = null;
      this.worker.onmessage = (ev) => {
        const { id, ok, value, error } = ev.data;
        const p = this.pending.get(id);
        if (!p) return;
        this.pending.delete(id);
        if (ok) p.resolve(value); else p.reject(new Error(error));
      };
      this.worker.onerror = (ev) => {
        this.dead = ev.message || 'the data worker stopped';
        this.pending.forEach((p) => p.reject(new Error(this.dead)));
        this.pending.clear();
      };
      this.ask('init', { module });
    }

    ask(type, args, transfer) {
      if (this.dead) return Promise.reject(new Error(this.dead));
      const id = this.next++;
      return new Promise((resolve, reject) => {
        this.pending.set(id, { resolve, reject });
        this.worker.postMessage({ id, type, ...args }, transfer || []);
      });
    }

    terminate() {
      this.worker.terminate();
      this.pending.forEach((p) => p.reject(new Error('stopped')));
      this.pending.clear();
      this.dead = 'stopped';
    }
  };

  // The small calls the main thread makes itself (no file is ever parsed here).
  PD.defaultRecipe = (label) => JSON.parse(wasm_bindgen.default_recipe(label || 'label'));
  PD.checkRecipe = (text) => JSON.parse(wasm_bindgen.check_recipe(text));
}(window.PD));
