// One decoding worker: its own wasm instance, running the tasks the pool hands it for any kind of analysis; or,
// once, reading a dropped NWB file into the extract the page and the pool decode from.
// Served page: the wasm-bindgen glue is loaded with importScripts. Offline file: the glue is concatenated in
// front of this script inside a Blob, so `wasm_bindgen` already exists.
/* global wasm_bindgen, importScripts */
'use strict';
if (typeof wasm_bindgen === 'undefined') {
  importScripts('pkg/popdecode.js');
}
let runner = null;

// An NWB file is read lazily from the dropped File (FileReaderSync works in workers only): the core asks for the
// pieces it needs through popdecodeReadAt. The HDF5 reader asks for many small pieces of metadata, so small reads
// are served from a cache of 64 KiB blocks; large reads (spike times, hashing) go straight to the file.
let dropped = null;
let bytesRead = 0;
const BLOCK = 65536;
const blocks = new Map(); // block number -> bytes; the Map's order is the order the blocks were read in
function readSlice(from, to) {
  const bytes = new Uint8Array(new FileReaderSync().readAsArrayBuffer(dropped.slice(from, to)));
  bytesRead += bytes.length;
  return bytes;
}
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
      runner = new wasm_bindgen.Runner(msg.kind, ...msg.files, msg.recipe, msg.options);
      self.postMessage({ type: 'ready' });
    } else if (msg.type === 'extract') {
      // One NWB file into its extract; `read` is what the tables took (the hash reads every byte once more).
      await wasm_bindgen({ module_or_path: msg.module });
      wasm_bindgen.start();
      dropped = msg.file;
      const bytes = wasm_bindgen.extract_nwb(dropped.name, dropped.size);
      self.postMessage({ type: 'extracted', bytes, read: bytesRead - dropped.size }, [bytes.buffer]);
    } else if (msg.type === 'task') {
      const outcome = runner.run(JSON.stringify(msg.task));
      self.postMessage({ type: 'done', id: msg.id, outcome });
    }
  } catch (e) {
    self.postMessage({ type: 'error', message: failure(e) });
  }
};
