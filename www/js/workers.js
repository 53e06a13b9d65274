// The wasm core and the page's workers: compiling the module once, making workers (from worker.js when served,
// from Blob URLs in the offline file), the pool size, and the data worker that holds the loaded files.
//
// Shared memory: when the page is cross-origin isolated (served with the two headers scripts/serve.sh sends) the
// browser lets workers share one WebAssembly memory. Each loaded data set then gets one memory, made here, and the
// data worker and every run worker for it are threads of the core built with atomics (www/pkg-shared/): run workers
// take the decoded data by a ticket (crate/wasm/shared.rs) instead of a copy, so memory does not grow with the
// number of workers. Elsewhere (the offline file, which a browser never isolates; a host without the headers) each
// run worker gets its own copy of the matrix, in transferred parts.
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

  // Whether workers share memory on this page, and the shared build's module for them (the main thread keeps the
  // plain build for its few small calls: a thread sharing memory may have to wait on a lock, which a page's main
  // thread is not allowed to do).
  PD.shared = !window.POPDECODE_OFFLINE && window.crossOriginIsolated === true && typeof SharedArrayBuffer === 'function';
  PD.compileSharedWasm = async function () {
    const response = await fetch('pkg-shared/popdecode_bg.wasm');
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

  // How many workers' worth of speed `workers` give, for the duration estimate. A worker on every core shares them
  // with the page and the browser: measured in Chromium 156 on this project's 2-core machine (2026-12-04), two
  // workers finished the example with 2,000 shuffles in 27.4 s where one took 34.4 s (1.26 times as fast, not 2).
  // So when the workers fill the cores, half a worker is taken off.
  PD.speedOf = (workers) => (workers >= (navigator.hardwareConcurrency || 2) ? Math.max(1, workers - 0.5) : workers);

  // The data worker: one per loaded data set. It reads the files (never the main thread), inspects them, keeps
  // them decoded for the current columns, prepares plans, hands the decoded matrix to run workers and finishes
  // runs. Requests are answered in order of arrival; each returns a promise. Run workers are made the same way,
  // with the data worker they work for as `partner` (whose memory they share, when memory is shared).
  PD.DataWorker = class {
    constructor(module, partner) {
      this.worker = PD.makeWorker();
      this.memory = null;
      this.first = !partner;
      if (PD.shared) {
        // 4 GiB at most: one 32-bit memory holds the data and every worker's working copies together.
        this.memory = partner ? partner.memory : new WebAssembly.Memory({ initial: 32, maximum: 65536, shared: true });
        this.stop = new Int32Array(new SharedArrayBuffer(4));
        module = PD.state.sharedModule;
      }
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
      this.stopAt = null;
      this.ask('init', this.memory ? { module, memory: this.memory, stop: this.stop } : { module })
        .then((at) => { if (this.memory) this.stopAt = at; }, () => {});
    }

    ask(type, args, transfer) {
      if (this.dead) return Promise.reject(new Error(this.dead));
      const id = this.next++;
      return new Promise((resolve, reject) => {
        this.pending.set(id, { resolve, reject });
        this.worker.postMessage({ id, type, ...args }, transfer || []);
      });
    }

    // Stop the worker: at once when it has a memory of its own; when memory is shared, it finishes the task it is
    // on, runs no other and closes itself (worker.js, `quit`), since stopping it at once could leave a lock of the
    // shared memory held for ever. Either way nothing more comes from it.
    terminate() {
      // Once only: a worker that shares memory gives its stop flag's memory back when it closes, so a second write
      // there could land in someone else's data.
      if (this.dead === 'stopped') return;
      if (this.memory) {
        // Between tasks (worker.js) and inside one (the core's loops look at the flag in the shared memory).
        Atomics.store(this.stop, 0, 1);
        if (typeof this.stopAt === 'number') Atomics.store(new Int32Array(this.memory.buffer), this.stopAt >>> 2, 1);
        this.worker.onmessage = null;
        this.worker.postMessage({ id: 0, type: 'quit', destroy: !this.first });
      } else this.worker.terminate();
      this.pending.forEach((p) => p.reject(new Error('stopped')));
      this.pending.clear();
      this.dead = 'stopped';
    }
  };

  // The small calls the main thread makes itself (no file is ever parsed here).
  PD.defaultRecipe = (label) => JSON.parse(wasm_bindgen.default_recipe(label || 'label'));
  PD.checkRecipe = (text) => JSON.parse(wasm_bindgen.check_recipe(text));
}(window.PD));
