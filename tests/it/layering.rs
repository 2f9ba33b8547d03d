//! The module graph of each crate has no cycles, and the layering rules of
//! `ARCHITECTURE.md` hold.
//!
//! The check reads the sources as text. A module depends on another when its
//! non-test code names a path into it (`crate::a::b`, `super::x`,
//! `self::y`, braces expanded; names the crate root re-exports resolve to
//! the module that defines them). Edges are compared between *siblings*:
//! the children of one parent module, each standing for its whole subtree,
//! so a stage's files may use their parent (`super::Engine`) while two
//! stages may not use each other both ways.

use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};

type ModPath = Vec<String>;

/// One crate's modules: path → non-test source text.
struct Crate {
    modules: BTreeMap<ModPath, String>,
    /// Names re-exported by the crate root, with the module that defines them.
    root_exports: BTreeMap<String, ModPath>,
}

fn workspace() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .parent()
        .expect("workspace root")
        .to_path_buf()
}

fn read_crate(src: &Path) -> Crate {
    let mut modules = BTreeMap::new();
    let mut test_only = BTreeSet::new();
    let mut stack = vec![src.to_path_buf()];
    while let Some(dir) = stack.pop() {
        for entry in std::fs::read_dir(&dir).expect("read src dir") {
            let p = entry.expect("dir entry").path();
            if p.is_dir() {
                stack.push(p);
                continue;
            }
            if p.extension().and_then(|e| e.to_str()) != Some("rs") {
                continue;
            }
            let rel = p.strip_prefix(src).expect("under src");
            let mut parts: ModPath = rel
                .with_extension("")
                .iter()
                .map(|s| s.to_string_lossy().into_owned())
                .collect();
            if parts.last().map(String::as_str) == Some("mod") {
                parts.pop();
            }
            if parts == ["lib"] || parts == ["main"] {
                parts.clear();
            }
            let text = std::fs::read_to_string(&p).expect("read source");
            let (code, tests) = strip_tests(&text);
            for t in tests {
                let mut m = parts.clone();
                m.push(t);
                test_only.insert(m);
            }
            modules.insert(parts, code);
        }
    }
    modules.retain(|m, _| !test_only.iter().any(|t| m.starts_with(t)));
    let root_exports = root_exports(modules.get(&Vec::new()).map_or("", String::as_str));
    Crate {
        modules,
        root_exports,
    }
}

/// The source without comments and `#[cfg(test)]` items, and the names of
/// modules declared test-only (`#[cfg(test)] mod x;`).
fn strip_tests(text: &str) -> (String, Vec<String>) {
    let lines: Vec<&str> = text
        .lines()
        .map(|l| match l.find("//") {
            Some(i) => &l[..i],
            None => l,
        })
        .collect();
    let mut out = String::new();
    let mut tests = Vec::new();
    let mut i = 0;
    while i < lines.len() {
        if lines[i].trim() == "#[cfg(test)]" {
            i += 1;
            while i < lines.len() && lines[i].trim().is_empty() {
                i += 1;
            }
            let Some(item) = lines.get(i) else { break };
            let t = item
                .trim()
                .trim_start_matches("pub ")
                .trim_start_matches("pub(crate) ");
            if let Some(name) = t.strip_prefix("mod ").and_then(|r| r.strip_suffix(';')) {
                tests.push(name.trim().to_string());
                i += 1;
                continue;
            }
            // Skip the item up to its closing brace or semicolon.
            let mut depth = 0i32;
            let mut opened = false;
            while i < lines.len() {
                for c in lines[i].chars() {
                    match c {
                        '{' => {
                            depth += 1;
                            opened = true;
                        }
                        '}' => depth -= 1,
                        _ => {}
                    }
                }
                let done = (opened && depth <= 0) || (!opened && lines[i].contains(';'));
                i += 1;
                if done {
                    break;
                }
            }
            continue;
        }
        out.push_str(lines[i]);
        out.push('\n');
        i += 1;
    }
    (out, tests)
}

/// `pub use a::{X, Y}` and `pub use a::b::X` in the crate root.
fn root_exports(lib: &str) -> BTreeMap<String, ModPath> {
    let mut map = BTreeMap::new();
    for stmt in lib.split(';') {
        let s = stmt.trim();
        let Some(rest) = s.strip_prefix("pub use ") else {
            continue;
        };
        let rest = rest.trim_start_matches("crate::");
        for prefix in expand(rest) {
            if let Some((last, module)) = prefix.split_last() {
                map.insert(last.clone(), module.to_vec());
            }
        }
    }
    map
}

/// Expands one use tree (`a::{b, c::{d, e}}`) into full paths.
fn expand(tree: &str) -> Vec<ModPath> {
    let tree: String = tree.chars().filter(|c| !c.is_whitespace()).collect();
    let mut out = Vec::new();
    expand_into(&tree, &mut Vec::new(), &mut out);
    out
}

fn expand_into(tree: &str, prefix: &mut ModPath, out: &mut Vec<ModPath>) {
    if let Some(open) = tree.find('{') {
        let head: ModPath = tree[..open]
            .split("::")
            .filter(|s| !s.is_empty())
            .map(str::to_string)
            .collect();
        let inner = &tree[open + 1..tree.rfind('}').unwrap_or(tree.len())];
        let n = prefix.len();
        prefix.extend(head);
        for part in split_top(inner) {
            expand_into(part, prefix, out);
        }
        prefix.truncate(n);
    } else {
        let mut p = prefix.clone();
        p.extend(
            tree.split("::")
                .map(|s| s.split(" as ").next().unwrap_or(s))
                .filter(|s| !s.is_empty() && *s != "self" && *s != "*")
                .map(str::to_string),
        );
        out.push(p);
    }
}

fn split_top(s: &str) -> Vec<&str> {
    let mut parts = Vec::new();
    let (mut depth, mut start) = (0, 0);
    for (i, c) in s.char_indices() {
        match c {
            '{' => depth += 1,
            '}' => depth -= 1,
            ',' if depth == 0 => {
                parts.push(&s[start..i]);
                start = i + 1;
            }
            _ => {}
        }
    }
    parts.push(&s[start..]);
    parts.into_iter().filter(|p| !p.trim().is_empty()).collect()
}

/// Every path that starts with `crate`, `super` or `self`, braces expanded.
fn paths_in(code: &str) -> Vec<(String, ModPath)> {
    let mut found = Vec::new();
    let bytes = code.as_bytes();
    for base in ["crate::", "super::", "self::"] {
        let mut from = 0;
        while let Some(k) = code[from..].find(base) {
            let at = from + k;
            from = at + base.len();
            if at > 0 && (bytes[at - 1].is_ascii_alphanumeric() || bytes[at - 1] == b'_') {
                continue;
            }
            // Take the path: identifiers, `::`, and a balanced brace group.
            let mut end = from;
            let mut depth = 0;
            while end < bytes.len() {
                let c = bytes[end] as char;
                if c == '{' {
                    depth += 1;
                } else if c == '}' {
                    if depth == 0 {
                        break;
                    }
                    depth -= 1;
                    if depth == 0 {
                        end += 1;
                        break;
                    }
                } else if depth == 0 && !(c.is_ascii_alphanumeric() || c == '_' || c == ':') {
                    break;
                }
                end += 1;
            }
            let tree = &code[from..end];
            // `super::super::x`
            let mut base = base.trim_end_matches("::").to_string();
            let mut tree = tree;
            while let Some(r) = tree.strip_prefix("super::") {
                base.push_str("::super");
                tree = r;
            }
            for p in expand(tree) {
                found.push((base.clone(), p));
            }
        }
    }
    found
}

/// The module a path names: the longest prefix that is a module, with root
/// re-exports followed.
fn resolve(krate: &Crate, path: &[String]) -> Option<ModPath> {
    if let [name] = path
        && let Some(m) = krate.root_exports.get(name)
    {
        return Some(m.clone());
    }
    (1..=path.len())
        .rev()
        .map(|k| path[..k].to_vec())
        .find(|p| krate.modules.contains_key(p))
}

/// Edges between siblings: `(parent, from child, to child)` with an example.
fn sibling_edges(krate: &Crate) -> BTreeMap<(ModPath, ModPath), String> {
    let mut edges = BTreeMap::new();
    for (m, code) in &krate.modules {
        for (base, p) in paths_in(code) {
            let mut start: ModPath = match base.as_str() {
                "crate" => Vec::new(),
                "self" => m.clone(),
                _ => {
                    let ups = base.matches("super").count();
                    if ups > m.len() {
                        continue;
                    }
                    m[..m.len() - ups].to_vec()
                }
            };
            start.extend(p.iter().cloned());
            let Some(target) = resolve(krate, &start) else {
                continue;
            };
            let k = m.iter().zip(&target).take_while(|(a, b)| a == b).count();
            if k == m.len() || k == target.len() {
                continue; // ancestor or descendant
            }
            edges
                .entry((m[..=k].to_vec(), target[..=k].to_vec()))
                .or_insert_with(|| format!("{} names {}", m.join("/"), start.join("::")));
        }
    }
    edges
}

fn cycles(edges: &BTreeMap<(ModPath, ModPath), String>) -> Vec<String> {
    let mut graph: BTreeMap<&ModPath, Vec<&ModPath>> = BTreeMap::new();
    for (a, b) in edges.keys() {
        graph.entry(a).or_default().push(b);
    }
    let mut found = Vec::new();
    for ((a, b), why) in edges {
        // Is there a path back from b to a?
        let mut seen = BTreeSet::new();
        let mut stack = vec![b];
        let mut back = false;
        while let Some(x) = stack.pop() {
            if x == a {
                back = true;
                break;
            }
            if seen.insert(x) {
                stack.extend(graph.get(x).into_iter().flatten().copied());
            }
        }
        if back {
            found.push(format!("{} -> {} ({why})", a.join("/"), b.join("/")));
        }
    }
    found
}

const CRATES: [&str; 4] = [
    "network-core/src",
    "network-report/src",
    "network-cli/src",
    "network-py/src",
];

#[test]
fn no_module_depends_on_a_module_that_depends_on_it() {
    let mut problems = Vec::new();
    for src in CRATES {
        let krate = read_crate(&workspace().join(src));
        assert!(krate.modules.len() > 1, "{src}: no modules found");
        for c in cycles(&sibling_edges(&krate)) {
            problems.push(format!("{src}: {c}"));
        }
    }
    assert!(
        problems.is_empty(),
        "import cycles:\n{}",
        problems.join("\n")
    );
}

/// `(module, modules it must not depend on)` in `network-core`, from the
/// code map of `ARCHITECTURE.md`.
const CORE_RULES: &[(&str, &[&str])] = &[
    (
        "network",
        &["geometry", "capillary", "engine", "io", "study", "run"],
    ),
    ("geometry", &["engine", "io", "study", "run"]),
    ("generate", &["engine", "io", "study", "run", "flow"]),
    ("capillary", &["engine", "io", "study", "run", "flow"]),
    ("engine", &["io", "study", "run", "flow", "fit", "sweep"]),
    ("flow", &["engine", "io", "study", "run"]),
    ("wettability", &["engine", "io", "study", "run"]),
    ("params", &["engine", "io", "study", "run"]),
    ("fit", &["engine", "io", "study", "run", "network"]),
    ("run", &["io", "study", "sweep"]),
    ("study", &["engine", "run", "io"]),
    ("image", &["engine", "io", "study", "run", "sweep", "flow"]),
];

#[test]
fn core_modules_respect_the_layering_rules() {
    let krate = read_crate(&workspace().join("network-core/src"));
    let edges = sibling_edges(&krate);
    let mut problems = Vec::new();
    for &(module, forbidden) in CORE_RULES {
        for ((a, b), why) in &edges {
            if a.len() == 1 && a[0] == module && forbidden.contains(&b[0].as_str()) {
                problems.push(format!("{module} must not depend on {}: {why}", b[0]));
            }
        }
    }
    assert!(problems.is_empty(), "{}", problems.join("\n"));
}

#[test]
fn report_reads_results_not_engine_internals() {
    // network-report turns plain result data into files; it must not reach
    // into the displacement engine or the flow solver.
    let root = workspace().join("network-report/src");
    let krate = read_crate(&root);
    let mut problems = Vec::new();
    for (m, code) in &krate.modules {
        for forbidden in ["network_core::engine", "network_core::flow::solver"] {
            if code.contains(forbidden) {
                problems.push(format!("{} uses {forbidden}", m.join("/")));
            }
        }
    }
    assert!(problems.is_empty(), "{}", problems.join("\n"));
}

#[test]
fn python_package_calls_the_library_not_its_internals() {
    // network-py is glue like the CLI: it reads, runs and writes through the
    // library's public calls and holds no physics of its own.
    let krate = read_crate(&workspace().join("network-py/src"));
    let mut problems = Vec::new();
    for (m, code) in &krate.modules {
        for forbidden in [
            "network_core::engine",
            "network_core::flow",
            "network_core::capillary",
            "network_core::geometry",
        ] {
            if code.contains(forbidden) {
                problems.push(format!("{} uses {forbidden}", m.join("/")));
            }
        }
    }
    assert!(problems.is_empty(), "{}", problems.join("\n"));
}

#[test]
fn the_checker_sees_a_planted_cycle() {
    // The detector itself: two sibling modules naming each other.
    let mut modules = BTreeMap::new();
    modules.insert(Vec::new(), String::new());
    modules.insert(
        vec!["a".to_string()],
        "use crate::b::{X, y::Z};".to_string(),
    );
    modules.insert(vec!["b".to_string()], String::new());
    modules.insert(
        vec!["b".to_string(), "y".to_string()],
        "fn f() { super::super::a::g() }".to_string(),
    );
    let krate = Crate {
        modules,
        root_exports: BTreeMap::new(),
    };
    let c = cycles(&sibling_edges(&krate));
    assert_eq!(c.len(), 2, "{c:?}");
    // And test-only code is not counted.
    let (code, tests) = strip_tests(
        "use a;\n#[cfg(test)]\nmod t;\n#[cfg(test)]\nmod u {\n use crate::x;\n}\nfn f() {}\n",
    );
    assert_eq!(tests, vec!["t".to_string()]);
    assert!(!code.contains("crate::x") && code.contains("fn f"));
}
