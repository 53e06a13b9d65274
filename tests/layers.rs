//! The layers run one way: a module of the core may use only its own layer and the layers below it.
//!
//! The order is the one documented in DEVELOPERS.md and `crate/lib.rs`; this test reads every `crate::` path in the
//! core's source (comments aside) and fails on any that points up.

use std::fs;
use std::path::{Path, PathBuf};

/// The core's top-level modules, bottom layer first; modules in the same row are one layer.
const LAYERS: &[&[&str]] = &[
    &["error", "rng", "recipe", "simulate", "stop"],
    &["data"],
    &["input"],
    &["resample"],
    &["decoders"],
    &["stats"],
    &["report"],
    &["analyses"],
    &["wasm", "memory"],
];

fn layer_of(module: &str) -> Option<usize> {
    LAYERS.iter().position(|row| row.contains(&module))
}

fn rust_files(dir: &Path, out: &mut Vec<PathBuf>) {
    for entry in fs::read_dir(dir).expect("a readable folder") {
        let path = entry.expect("an entry").path();
        if path.is_dir() {
            rust_files(&path, out);
        } else if path.extension().is_some_and(|e| e == "rs") {
            out.push(path);
        }
    }
}

/// The top-level modules a source text names through `crate::`, outside comments.
fn uses(source: &str) -> Vec<String> {
    let mut found = Vec::new();
    for line in source.lines() {
        let code = line.split("//").next().unwrap_or("");
        let mut rest = code;
        while let Some(at) = rest.find("crate::") {
            let tail = &rest[at + "crate::".len()..];
            let name: String = tail
                .chars()
                .take_while(|c| c.is_ascii_alphanumeric() || *c == '_')
                .collect();
            if !name.is_empty() {
                found.push(name);
            }
            rest = tail;
        }
        // `use crate::{a, b}` names several at once.
        if let Some(at) = code.find("crate::{") {
            let inner = &code[at + "crate::{".len()..];
            for part in inner.split([',', '}']) {
                let name: String = part
                    .trim()
                    .chars()
                    .take_while(|c| c.is_ascii_alphanumeric() || *c == '_')
                    .collect();
                if !name.is_empty() {
                    found.push(name);
                }
            }
        }
    }
    found
}

#[test]
fn no_module_imports_from_a_layer_above_it() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("crate");
    let mut files = Vec::new();
    rust_files(&root, &mut files);
    let mut checked = 0;
    let mut upward = Vec::new();
    for file in files {
        let rel = file.strip_prefix(&root).expect("under crate/");
        let top = rel
            .components()
            .next()
            .expect("a path")
            .as_os_str()
            .to_string_lossy()
            .trim_end_matches(".rs")
            .to_string();
        // The CLI and the bench binaries are faces built on the library's public API; lib.rs only lists modules.
        if matches!(top.as_str(), "cli" | "bin" | "lib") {
            continue;
        }
        let own = layer_of(&top).unwrap_or_else(|| {
            panic!("crate/{top} is in no layer; add it to LAYERS here and to DEVELOPERS.md")
        });
        for used in uses(&fs::read_to_string(&file).expect("readable source")) {
            checked += 1;
            match layer_of(&used) {
                Some(l) if l > own => upward.push(format!(
                    "{} uses crate::{used} (layer {l} above its own layer {own})",
                    rel.display()
                )),
                _ => {}
            }
        }
    }
    assert!(checked > 100, "only {checked} crate:: paths found");
    assert!(
        upward.is_empty(),
        "imports up the layers:\n{}",
        upward.join("\n")
    );
}

#[test]
fn the_check_sees_an_upward_import() {
    // The reader itself: a path up the layers and a braced list are both found.
    assert_eq!(
        uses("use crate::analyses::Analysis; // crate::wasm"),
        ["analyses"]
    );
    assert_eq!(uses("use crate::{data, report::svg};"), ["data", "report"]);
    assert!(layer_of("analyses") > layer_of("data"));
}
