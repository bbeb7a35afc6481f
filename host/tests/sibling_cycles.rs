//! No two sibling modules of the host crates (records, synth, plethwire,
//! the command line) depend on each other, directly or round a loop: a
//! newcomer can read each folder bottom up. Reads the sources and follows
//! every `crate::` and `super::` path outside test modules.

use std::collections::{BTreeMap, BTreeSet};
use std::fs;
use std::path::{Path, PathBuf};

/// The crates checked, as folders beside this one.
const CRATES: [&str; 4] = ["records", "synth", "host", "cli"];

type ModPath = Vec<String>;

/// Every `.rs` file under `dir` with its module path (`a/mod.rs` and
/// `a.rs` are `a`; `lib.rs` and `main.rs` the root).
fn modules(src: &Path, dir: &Path, out: &mut Vec<(PathBuf, ModPath)>) {
    let mut entries: Vec<_> = fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .collect();
    entries.sort();
    for path in entries {
        if path.is_dir() {
            modules(src, &path, out);
        } else if path.extension().is_some_and(|e| e == "rs") {
            let rel = path.strip_prefix(src).unwrap().with_extension("");
            let mut m: ModPath = rel
                .iter()
                .map(|s| s.to_string_lossy().into_owned())
                .collect();
            if matches!(m.last().map(String::as_str), Some("mod" | "lib" | "main")) {
                m.pop();
            }
            out.push((path, m));
        }
    }
}

/// The code of `text` without comments and without its `#[cfg(test)]`
/// modules (tests may reach anywhere).
fn code(text: &str) -> String {
    let mut out = String::new();
    let mut skip_depth: Option<i32> = None;
    let mut depth = 0;
    let mut lines = text.lines().peekable();
    while let Some(line) = lines.next() {
        let line = line.split("//").next().unwrap_or("");
        let trimmed = line.trim();
        if skip_depth.is_none() && trimmed == "#[cfg(test)]" {
            if let Some(next) = lines.peek() {
                if next.trim_start().starts_with("mod ") && next.contains('{') {
                    skip_depth = Some(depth);
                }
            }
        }
        depth += line.matches('{').count() as i32 - line.matches('}').count() as i32;
        match skip_depth {
            Some(d) if depth <= d && trimmed.ends_with('}') => skip_depth = None,
            Some(_) => {}
            None => {
                out.push_str(line);
                out.push('\n');
            }
        }
    }
    out
}

/// Paths starting with `crate::` or `super::` in `code`, braces of `use`
/// lists expanded, each resolved against module `here`.
fn targets(code: &str, here: &ModPath) -> Vec<ModPath> {
    let mut raw = Vec::new();
    for stmt in code.split(';') {
        let flat: String = stmt.split_whitespace().collect::<Vec<_>>().join(" ");
        if let Some(rest) = flat.trim().strip_prefix("use ").or_else(|| {
            flat.split_once("pub use ")
                .or_else(|| flat.split_once("pub(crate) use "))
                .map(|(_, r)| r)
        }) {
            expand(rest.trim(), &mut raw);
        }
    }
    let chars: Vec<char> = code.chars().collect();
    let mut i = 0;
    while i < chars.len() {
        let starts_word = i == 0 || !(chars[i - 1].is_alphanumeric() || chars[i - 1] == '_');
        if starts_word && (code_at(&chars, i, "crate::") || code_at(&chars, i, "super::")) {
            let mut j = i;
            while j < chars.len()
                && (chars[j].is_alphanumeric() || chars[j] == '_' || chars[j] == ':')
            {
                j += 1;
            }
            raw.push(chars[i..j].iter().collect::<String>());
            i = j;
        } else {
            i += 1;
        }
    }
    raw.iter().filter_map(|p| resolve(p, here)).collect()
}

fn code_at(chars: &[char], i: usize, word: &str) -> bool {
    word.chars()
        .enumerate()
        .all(|(k, c)| chars.get(i + k) == Some(&c))
}

/// `a::{b, c::{d}}` as `a::b`, `a::c::d`.
fn expand(list: &str, out: &mut Vec<String>) {
    match list.find('{') {
        None => out.push(list.split(" as ").next().unwrap_or("").trim().to_owned()),
        Some(open) => {
            let prefix = &list[..open];
            let inner = &list[open + 1..list.rfind('}').unwrap_or(list.len())];
            let (mut level, mut start) = (0, 0);
            let bytes = inner.as_bytes();
            for k in 0..=bytes.len() {
                let end = k == bytes.len();
                if !end && bytes[k] == b'{' {
                    level += 1;
                } else if !end && bytes[k] == b'}' {
                    level -= 1;
                } else if end || (bytes[k] == b',' && level == 0) {
                    let part = inner[start..k].trim();
                    if !part.is_empty() {
                        expand(&format!("{prefix}{part}"), out);
                    }
                    start = k + 1;
                }
            }
        }
    }
}

/// `path` from module `here` as a path from the crate root; `super` in
/// `a/mod.rs` or `a.rs` is the parent of `a`.
fn resolve(path: &str, here: &ModPath) -> Option<ModPath> {
    let segments: Vec<&str> = path.split("::").filter(|s| !s.is_empty()).collect();
    let mut base: ModPath = Vec::new();
    let mut rest = &segments[..];
    if rest.first() == Some(&"crate") {
        rest = &rest[1..];
    } else {
        base = here.clone();
        while rest.first() == Some(&"super") {
            base.pop()?;
            rest = &rest[1..];
        }
        if rest.len() == segments.len() {
            return None;
        }
    }
    base.extend(rest.iter().filter(|s| **s != "self").map(|s| s.to_string()));
    Some(base)
}

/// The edges between sibling modules: parent path to (from, to) names.
fn sibling_edges(root: &Path) -> BTreeMap<ModPath, BTreeSet<(String, String)>> {
    let src = root.join("src");
    let mut files = Vec::new();
    modules(&src, &src, &mut files);
    let known: BTreeSet<ModPath> = files.iter().map(|f| f.1.clone()).collect();
    let mut edges: BTreeMap<ModPath, BTreeSet<(String, String)>> = BTreeMap::new();
    for (path, here) in &files {
        let text = code(&fs::read_to_string(path).unwrap());
        for target in targets(&text, here) {
            let common = here.iter().zip(&target).take_while(|(a, b)| a == b).count();
            if common >= here.len() || common >= target.len() {
                continue; // a module and its own descendants or ancestors
            }
            let parent = here[..common].to_vec();
            let to: ModPath = target[..=common].to_vec();
            if known.contains(&to) {
                edges
                    .entry(parent)
                    .or_default()
                    .insert((here[common].clone(), target[common].clone()));
            }
        }
    }
    edges
}

/// Modules reachable from `from` by one or more edges.
fn reachable(from: &str, edges: &BTreeSet<(String, String)>) -> BTreeSet<String> {
    let mut seen = BTreeSet::new();
    let mut todo = vec![from.to_owned()];
    while let Some(node) = todo.pop() {
        for (_, to) in edges.iter().filter(|(f, _)| *f == node) {
            if seen.insert(to.clone()) {
                todo.push(to.clone());
            }
        }
    }
    seen
}

/// The groups of modules that depend on each other round a loop, each
/// sorted, as `a <-> b`.
fn cyclic_groups(edges: &BTreeSet<(String, String)>) -> Vec<String> {
    let nodes: BTreeSet<&String> = edges.iter().map(|e| &e.0).collect();
    let reach: BTreeMap<&String, BTreeSet<String>> =
        nodes.iter().map(|n| (*n, reachable(n, edges))).collect();
    let mut groups = BTreeSet::new();
    for n in &nodes {
        if !reach[n].contains(*n) {
            continue;
        }
        let group: Vec<String> = reach[n]
            .iter()
            .filter(|m| reach.get(m).is_some_and(|r| r.contains(*n)))
            .cloned()
            .collect();
        groups.insert(group.join(" <-> "));
    }
    groups.into_iter().collect()
}

#[test]
fn no_sibling_modules_depend_on_each_other() {
    let workspace = Path::new(env!("CARGO_MANIFEST_DIR")).parent().unwrap();
    let mut cycles = BTreeSet::new();
    for name in CRATES {
        for (parent, edges) in sibling_edges(&workspace.join(name)) {
            let folder = if parent.is_empty() {
                "(root)".to_owned()
            } else {
                parent.join("/")
            };
            for group in cyclic_groups(&edges) {
                cycles.insert(format!("{name}: {folder}: {group}"));
            }
        }
    }
    assert!(cycles.is_empty(), "sibling import cycles: {cycles:#?}");
}

#[test]
fn the_check_finds_a_cycle_through_braces_and_inline_paths() {
    let here: ModPath = vec!["report".into(), "page".into()];
    let text = "use super::{views::{a, b}, html::escape as e};\nfn f() { super::charts::draw(); }";
    let found = targets(text, &here);
    for want in [
        ["report", "views", "a"],
        ["report", "html", "escape"],
        ["report", "charts", "draw"],
    ] {
        assert!(
            found.iter().any(|t| t == &want),
            "{want:?} not in {found:?}"
        );
    }
    let edges: BTreeSet<(String, String)> = [("a", "b"), ("b", "c"), ("c", "a"), ("d", "a")]
        .iter()
        .map(|(x, y)| (x.to_string(), y.to_string()))
        .collect();
    assert_eq!(cyclic_groups(&edges), ["a <-> b <-> c"]);
    let tree: BTreeSet<(String, String)> = [("a", "b"), ("a", "c"), ("b", "c")]
        .iter()
        .map(|(x, y)| (x.to_string(), y.to_string()))
        .collect();
    assert!(cyclic_groups(&tree).is_empty());
    assert!(code("#[cfg(test)]\nmod tests {\n    use super::x;\n}\nuse a;").contains("use a"));
    assert!(!code("#[cfg(test)]\nmod tests {\n    use super::x;\n}\n").contains("super"));
}
