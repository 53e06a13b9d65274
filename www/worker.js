// The page's workers, one script for three roles (www/js/workers.js makes the first two):
// * the data worker holds the loaded files, reads and inspects them, keeps them decoded (wasm `Loaded`) for the
//   current columns, prepares plans, hands the decoded matrix to run workers and finishes runs; an NWB file is
//   read lazily here into its extract;
// * a run worker gets the decoded data once (`run-part`: the matrix in parts of a few megabytes, each transferred,
//   so no side holds a second whole copy on the way; `run-hold`: its header; or, when workers share memory,
//   `run-take`: a ticket for the data worker's own), then for each run on it (the page keeps a worker warm between
//   runs) the analysis (`run-init`), and answers task messages with outcome JSON;
// * a reader (shared memory only) is made by the data worker to read and decode one large table, and ends.
// Served page: the wasm-bindgen glue is loaded with importScripts when the `init` message says which build: the
// shared-memory one (www/pkg-shared/) when the page gives a shared memory, every worker of a data set then being a
// thread of one memory (crate/wasm/shared.rs). Offline file: the glue is concatenated in front of this script
// inside a Blob, so `wasm_bindgen` already exists (and memory is never shared there).
/* global wasm_bindgen, importScripts */
'use strict';

let started = null;
let core = null; // the instance's raw exports
// Shared memory only: an Int32Array over a SharedArrayBuffer the page sets to 1 when it lets this worker go. A worker
// sharing memory is never terminated (it could hold a lock of the shared memory, and every other worker would wait
// on it for ever): it finishes the task it is on, runs no other, and closes itself (`quit`).
let stop = null;
function startWasm(module, memory) {
  if (!started) {
    if (typeof wasm_bindgen === 'undefined') importScripts(memory ? 'pkg-shared/popdecode.js' : 'pkg/popdecode.js');
    started = wasm_bindgen(memory ? { module_or_path: module, memory } : { module_or_path: module })
      .then((exports) => { core = exports; wasm_bindgen.start(); });
  }
  return started;
}

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

// ---------- files read in pieces (FileReaderSync works in workers only) ----------
// The core asks for the pieces it needs of an NWB file (`dropped`) through popdecodeReadAt, and of a trial table
// through popdecodeReadInto. The HDF5 reader asks for many small pieces of metadata, so small reads are served
// from a cache of 64 KiB blocks; large reads go straight to the file.
let dropped = null;
let bytesRead = 0;
const BLOCK = 65536;
const blocks = new Map(); // block number -> bytes; the Map's order is the order the blocks were read in
function readSlice(from, to) {
  const bytes = new Uint8Array(new FileReaderSync().readAsArrayBuffer(dropped.slice(from, to)));
  bytesRead += bytes.length;
  return bytes;
}
// `buf.length` bytes from `offset` into `buf` (a view of the core's memory), from the table being read
// (`droppedBytes`: the file read once, so pieces copied out of it leave nothing for the garbage collector).
let droppedBytes = null;
self.popdecodeReadInto = (offset, buf) => {
  const piece = droppedBytes.subarray(offset, offset + buf.length);
  buf.set(piece);
  return piece.length;
};
self.popdecodeReadAt = (offset, length) => {
  if (length >= BLOCK) return readSlice(offset, offset + length);
  const out = new Uint8Array(length);
  for (let filled = 0; filled < length;) {
    const at = offset + filled;
    const b = Math.floor(at / BLOCK);
    let block = blocks.get(b);
    if (!block) {
      block = readSlice(b * BLOCK, (b + 1) * BLOCK);
      blocks.set(b, block);
      if (blocks.size > 64) blocks.delete(blocks.keys().next().value);
    }
    const n = Math.min(length - filled, block.length - (at - b * BLOCK));
    if (n <= 0) throw new Error(`${dropped.name}: read past the end of the file`);
    out.set(block.subarray(at - b * BLOCK, at - b * BLOCK + n), filled);
    filled += n;
  }
  return out;
};

// ---------- the data worker ----------
// slots: 'table' (trial table or binned table), 'events' (spike events), 'trials' (the events' trial table),
// 'nwb' (the extract): each { name, blob }.
const slots = {};
let loaded = null; // { key, value: wasm Loaded }
const read = (blob) => new Uint8Array(new FileReaderSync().readAsArrayBuffer(blob));
// The first part of a file, cut at a line end: enough to show the columns of a spike events file of any size.
function head(blob) {
  const LIMIT = 256 * 1024;
  if (blob.size <= LIMIT) return read(blob);
  const bytes = read(blob.slice(0, LIMIT));
  const cut = bytes.lastIndexOf(10);
  return bytes.subarray(0, cut > 0 ? cut + 1 : LIMIT);
}

// A study's files (the study table, if any, and every session's file; an NWB file as its extract), in the order
// they were dropped: each { name, blob }.
let studyFiles = [];

// The files as the core's bridge takes them: (name, bytes) twice; the second is empty for one file.
function fileArgs(dataKind) {
  const one = (s) => {
    const bytes = s.bytes || read(s.blob);
    s.bytes = null;
    return [s.name, bytes, '', new Uint8Array(0)];
  };
  if (dataKind === 'events') return [slots.events.name, read(slots.events.blob), slots.trials.name, read(slots.trials.blob)];
  return one(dataKind === 'nwb' ? slots.nwb : slots.table);
}

// `fn` with `blob` as the table popdecodeReadInto reads: read once here, and copied into the core a piece at a
// time, so the core never holds the file's bytes beside the matrix it decodes from them.
// `slot`: the file's bytes stay with its slot until the table is first decoded (the first look at a table is
// followed at once by its decoding for the first check, and a second read of a large file would leave the first
// one's bytes to the garbage collector beside the matrix).
function readInPieces(blob, fn, slot) {
  droppedBytes = (slot && slot.bytes) || read(blob);
  if (slot) slot.bytes = null;
  try { return fn(); } finally { droppedBytes = null; }
}

// ---------- a reader (shared memory only) ----------
// A file's bytes, once read by FileReaderSync, stay in the reading worker's memory until its garbage collector
// runs, and detaching them (`transfer(0)`) does not give them back (measured 2026-12-04 in Chromium 156: an 80 MB
// file read twice held 160 MB). When workers share memory, a large table is therefore read and decoded by a worker
// of its own that ends as soon as it is done: the decoded data stay in the shared memory (by a ticket,
// crate/wasm/shared.rs), and the file's bytes go with the worker.
const READER_BYTES = 8e6;
let shared = null; // { module, memory } when this worker shares memory
function inReader(request) {
  return new Promise((resolve, reject) => {
    const reader = new Worker('worker.js');
    reader.onmessage = (e) => {
      if (e.data.id !== 2) return; // 1 answers `init`
      reader.onmessage = null;
      if (e.data.ok) resolve(e.data.value); else reject(new Error(e.data.error));
    };
    reader.onerror = (e) => reject(new Error(e.message || 'the worker reading the file stopped'));
    reader.postMessage({ id: 1, type: 'init', ...shared, stop: new Int32Array(new SharedArrayBuffer(4)) });
    reader.postMessage({ id: 2, ...request });
  });
}
// A reader ends once its answer is posted (its thread's stack given back to the shared memory first).
function leave() {
  setTimeout(() => { try { core.__wbindgen_thread_destroy(); } finally { self.close(); } });
}
const readerHandlers = {
  // A table's first look (JSON).
  'read-info': (msg) => {
    droppedBytes = read(msg.file);
    try { return wasm_bindgen.inspect_dropped(msg.file.name, msg.file.size); } finally { droppedBytes = null; leave(); }
  },
  // A trial table decoded for analysis `kind`: a ticket for it.
  'read-table': (msg) => {
    droppedBytes = read(msg.file);
    let value = null;
    try {
      value = wasm_bindgen.Loaded.from_dropped(msg.kind, msg.file.name, msg.file.size, msg.recipe);
      return value.share();
    } finally {
      if (value) value.free();
      droppedBytes = null;
      leave();
    }
  },
};

async function ensureLoaded(msg) {
  if (loaded && loaded.key === msg.key) return loaded.value;
  if (loaded) { loaded.value.free(); loaded = null; }
  let value;
  if (msg.dataKind === 'table' && ['table', 'neurons', 'power'].includes(msg.kind)) {
    // A trial table is decoded straight from the file: its bytes are never held beside the matrix (and when
    // memory is shared, a large one is read by a worker that then ends).
    const { name, blob } = slots.table;
    if (shared && blob.size > READER_BYTES) {
      value = wasm_bindgen.Loaded.from_ticket(await inReader({ type: 'read-table', file: blob, kind: msg.kind, recipe: msg.recipe }));
    } else {
      value = readInPieces(blob, () => wasm_bindgen.Loaded.from_dropped(msg.kind, name, blob.size, msg.recipe), slots.table);
    }
  } else if (msg.dataKind === 'study') {
    const files = studyFileSet();
    try { value = wasm_bindgen.Loaded.with_files(msg.kind, files, msg.recipe); } finally { files.free(); }
  } else {
    value = new wasm_bindgen.Loaded(msg.kind, ...fileArgs(msg.dataKind), msg.recipe);
  }
  loaded = { key: msg.key, value };
  return value;
}

// The study's files as the core takes them (copied into the core's memory; the caller frees the set).
function studyFileSet() {
  const files = new wasm_bindgen.Files();
  studyFiles.forEach((f) => files.add(f.name, read(f.blob)));
  return files;
}

const handlers = {
  // Shared memory: the answer is the address of this thread's stop flag in that memory (crate/stop.rs).
  init: async (msg) => {
    stop = msg.stop || null;
    if (msg.memory) shared = { module: msg.module, memory: msg.memory };
    await startWasm(msg.module, msg.memory);
    return msg.memory ? wasm_bindgen.stop_address() : true;
  },
  // A file into a slot, and a first look at it.
  put: async (msg) => {
    if (loaded) { loaded.value.free(); loaded = null; }
    if (msg.slot === 'nwb') {
      dropped = msg.file; bytesRead = 0; blocks.clear();
      const extract = wasm_bindgen.extract_nwb(dropped.name, dropped.size);
      const info = JSON.parse(wasm_bindgen.inspect_nwb(dropped.name, extract));
      slots.nwb = { name: dropped.name, blob: new Blob([extract]) };
      dropped = null; blocks.clear();
      return { info, read: bytesRead - msg.file.size };
    }
    // A table is read in pieces (rows counted and columns described without the core holding the file); a spike
    // events file only by its first part.
    const slot = { name: msg.file.name, blob: msg.file };
    let info;
    if (msg.slot === 'events') info = wasm_bindgen.inspect(msg.file.name, head(msg.file));
    else if (shared && msg.file.size > READER_BYTES) info = await inReader({ type: 'read-info', file: msg.file });
    else {
      droppedBytes = read(msg.file);
      try { info = wasm_bindgen.inspect_dropped(msg.file.name, msg.file.size); } finally { slot.bytes = droppedBytes; droppedBytes = null; }
      // A trial table's bytes wait for its first decoding (readInPieces, fileArgs), which so reads the file once
      // for both; a trial table of spike events is read again with them.
      if (msg.slot !== 'table') slot.bytes = null;
    }
    info = JSON.parse(info);
    slots[msg.slot] = slot;
    return { info };
  },
  // Just the header and first rows of a file, without keeping it (to tell which of two dropped files is which).
  peek: (msg) => JSON.parse(wasm_bindgen.inspect(msg.file.name, head(msg.file))),
  swap: () => {
    [slots.events, slots.trials] = [slots.trials, slots.events];
    if (loaded) { loaded.value.free(); loaded = null; }
    return true;
  },
  drop: (msg) => { delete slots[msg.slot]; if (loaded) { loaded.value.free(); loaded = null; } return true; },
  // The plan of a recipe (the page times a task in a worker of its own: a slow decoder on large data must never
  // hold up the check of the settings that follow).
  prepare: async (msg) => {
    const data = await ensureLoaded(msg);
    const plan = JSON.parse(data.prepare(msg.kind, msg.recipe, msg.options));
    return { plan, header: msg.withHeader ? JSON.parse(data.header()) : null };
  },
  header: async (msg) => (await ensureLoaded(msg)).header(),
  // Values from..from+len of the decoded matrix and the matrix's size, for a run worker (the part transferred).
  // A ticket by which a run worker sharing this memory takes the decoded data without a copy, and the matrix's size.
  share: async (msg) => {
    const data = await ensureLoaded(msg);
    const header = JSON.parse(data.header());
    return { ticket: data.share(), values: header.family === 'table' ? header.trials * header.features : header.windows_count * header.trials * header.neurons_count };
  },
  'matrix-part': async (msg) => {
    const part = (await ensureLoaded(msg)).matrix_part(msg.from, msg.len);
    const total = part.total;
    const values = part.values();
    return { value: { total, values }, transfer: [values.buffer] };
  },
  // A study's files: each one's first rows (to tell the study table from the sessions, and to offer the columns
  // of the first session); an NWB file is read into its extract here, as for one NWB file.
  'study-put': (msg) => {
    if (loaded) { loaded.value.free(); loaded = null; }
    studyFiles = [];
    return msg.files.map((file) => {
      if (/\.nwb$/i.test(file.name)) {
        dropped = file; blocks.clear();
        const extract = wasm_bindgen.extract_nwb(file.name, file.size);
        dropped = null; blocks.clear();
        studyFiles.push({ name: file.name, blob: new Blob([extract]) });
        return { name: file.name, nwb: JSON.parse(wasm_bindgen.inspect_nwb(file.name, extract)) };
      }
      studyFiles.push({ name: file.name, blob: file });
      return { name: file.name, info: JSON.parse(wasm_bindgen.inspect(file.name, head(file))) };
    });
  },
  // The study's sessions as they would enter (subject, trials, neurons, class counts) and those flagged, with why.
  'study-sessions': (msg) => {
    const files = studyFileSet();
    try { return JSON.parse(wasm_bindgen.study_sessions(files, msg.recipe, msg.options)); } finally { files.free(); }
  },
  // A study table's rows (file, session, subject), so the page can let the user edit the subjects.
  'study-rows': (msg) => wasm_bindgen.study_rows(msg.name, read(studyFiles.find((f) => f.name === msg.name).blob)),
  // File i of an analysis that reads files, for a run worker (its buffer transferred).
  file: async (msg) => {
    const bytes = (await ensureLoaded(msg)).file(msg.index);
    return { value: bytes, transfer: [bytes.buffer] };
  },
  finish: async (msg) => JSON.parse((await ensureLoaded(msg)).finish(msg.kind, msg.recipe, msg.options, msg.outcomes)),
};

// ---------- a run worker ----------
let runner = null;
let incoming = null; // the matrix being filled part by part (wasm MatrixIn)
let held = null; // the decoded data, kept for every run on it while the page keeps this worker (wasm Held)
const runHandlers = {
  // A part of the decoded matrix (the first reserves room for all of it).
  'run-part': async (msg) => {
    await startWasm(msg.module);
    if (!incoming) incoming = new wasm_bindgen.MatrixIn(msg.total);
    incoming.put(msg.values);
    return true;
  },
  // The matrix complete (none came if it is empty): with its header, the data this worker holds.
  'run-hold': async (msg) => {
    await startWasm(msg.module);
    const matrix = incoming || new wasm_bindgen.MatrixIn(0);
    incoming = null;
    if (runner) { runner.free(); runner = null; }
    if (held) held.free();
    held = new wasm_bindgen.Held(msg.header, matrix);
    return true;
  },
  // The decoded data by a ticket of the data worker (shared memory: nothing is copied).
  'run-take': async (msg) => {
    if (runner) { runner.free(); runner = null; }
    if (held) held.free();
    held = wasm_bindgen.Held.from_ticket(msg.ticket);
    return true;
  },
  // A run on the data held: its analysis, recipe and options.
  'run-init': (msg) => {
    if (runner) runner.free();
    runner = null;
    runner = new wasm_bindgen.Runner(msg.kind, held, msg.recipe, msg.options);
    return true;
  },
  // An analysis that reads files (a study, generalization across conditions, continuous decoding): the files
  // themselves, as the data worker holds them.
  'run-init-files': async (msg) => {
    await startWasm(msg.module);
    const files = new wasm_bindgen.Files();
    msg.names.forEach((name, i) => files.add(name, msg.files[i]));
    try { runner = wasm_bindgen.Runner.with_files(msg.kind, files, msg.recipe, msg.options); } finally { files.free(); }
    return true;
  },
  // Tasks one after the other (as `prepare` listed them), their outcome JSON strings in the same order.
  // Once the page has let this worker go, nothing of the batch is answered: tasks cut short by the core's stop flag
  // (crate/stop.rs) hold unfinished numbers.
  tasks: (msg) => msg.tasks.map((task) => {
    if (stop && Atomics.load(stop, 0)) throw new Error('stopped');
    const outcome = runner.run(JSON.stringify(task));
    if (stop && Atomics.load(stop, 0)) throw new Error('stopped');
    return outcome;
  }),
  // Shared memory: let go of what this worker holds (the shared data's count drops) and close. `destroy`: free this
  // thread's stack too (every worker but the data worker, whose stack is the memory's first).
  quit: (msg) => {
    try {
      for (const v of [runner, held, incoming, loaded && loaded.value]) if (v) v.free();
      runner = null; held = null; incoming = null; loaded = null;
      if (msg.destroy && core) core.__wbindgen_thread_destroy();
    } finally {
      self.close();
    }
    return true;
  },
};

// Messages are handled one at a time, in order of arrival, also when a handler waits (for the core to start, or
// for a reader): a look at the data never runs before the file it looks at is in.
let queue = Promise.resolve();
self.onmessage = (event) => { queue = queue.then(() => handle(event.data)); };
async function handle(msg) {
  const handler = handlers[msg.type] || runHandlers[msg.type] || readerHandlers[msg.type];
  try {
    let value = await handler(msg);
    let transfer = [];
    if (value && value.transfer) { transfer = value.transfer; value = value.value; }
    self.postMessage({ id: msg.id, ok: true, value }, transfer);
  } catch (e) {
    self.postMessage({ id: msg.id, ok: false, error: failure(e) });
  }
}
