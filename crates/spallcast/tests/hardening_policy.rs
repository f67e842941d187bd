//! Policy checks on the source tree: the application makes no network connections (no network client
//! or TLS crate anywhere in Cargo.lock) and our crates hold no `unsafe` code (none written, and every
//! crate root forbids it).

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    reason = "tests: a panic is a failure"
)]

use std::path::{Path, PathBuf};

fn workspace_root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../..")
}

/// HTTP, WebSocket and other network clients and servers, and TLS stacks (TLS only ever serves a
/// network connection). A crate in this list appearing in Cargo.lock fails the test.
const NETWORK_CRATES: &[&str] = &[
    "reqwest",
    "hyper",
    "hyper-util",
    "h2",
    "h3",
    "quinn",
    "ureq",
    "curl",
    "curl-sys",
    "isahc",
    "surf",
    "http-client",
    "attohttpc",
    "minreq",
    "ehttp",
    "tokio-tungstenite",
    "tungstenite",
    "async-tungstenite",
    "websocket",
    "awc",
    "actix-web",
    "axum",
    "warp",
    "tiny_http",
    "rustls",
    "native-tls",
    "openssl",
    "openssl-sys",
    "tokio-rustls",
    "hyper-rustls",
    "hyper-tls",
];

/// Package names listed in a Cargo.lock text.
fn locked_packages(lock: &str) -> Vec<String> {
    lock.lines()
        .filter_map(|l| l.strip_prefix("name = \""))
        .filter_map(|l| l.strip_suffix('"'))
        .map(str::to_owned)
        .collect()
}

#[test]
fn cargo_lock_holds_no_network_client() {
    let lock = std::fs::read_to_string(workspace_root().join("Cargo.lock")).unwrap();
    let packages = locked_packages(&lock);
    // The lock file is read right: our own crates and a few known dependencies are there.
    for expected in ["spallcast", "spallcast-store", "rusqlite", "hound"] {
        assert!(
            packages.iter().any(|p| p == expected),
            "{expected} missing: is this Cargo.lock?"
        );
    }
    let found: Vec<&String> = packages
        .iter()
        .filter(|p| NETWORK_CRATES.contains(&p.as_str()))
        .collect();
    assert!(
        found.is_empty(),
        "network crates in Cargo.lock (the application must make no network connections): {found:?}"
    );
}

#[test]
fn the_network_check_would_catch_a_client() {
    let lock =
        "[[package]]\nname = \"ureq\"\nversion = \"2.0.0\"\n\n[[package]]\nname = \"hound\"\n";
    let packages = locked_packages(lock);
    assert_eq!(packages, vec!["ureq".to_owned(), "hound".to_owned()]);
    assert!(
        packages
            .iter()
            .any(|p| NETWORK_CRATES.contains(&p.as_str()))
    );
}

/// The code of a Rust source with comments and the contents of string and char literals blanked,
/// so that only real tokens remain (raw strings with `#` are treated as plain strings: enough here).
fn code_only(source: &str) -> String {
    let b = source.as_bytes();
    let mut out = String::with_capacity(source.len());
    let mut i = 0;
    let mut block_depth = 0usize;
    while i < b.len() {
        let c = b[i];
        let next = b.get(i + 1).copied();
        if block_depth > 0 {
            if c == b'*' && next == Some(b'/') {
                block_depth -= 1;
                i += 2;
            } else if c == b'/' && next == Some(b'*') {
                block_depth += 1;
                i += 2;
            } else {
                if c == b'\n' {
                    out.push('\n');
                }
                i += 1;
            }
            continue;
        }
        match (c, next) {
            (b'/', Some(b'/')) => {
                while i < b.len() && b[i] != b'\n' {
                    i += 1;
                }
            }
            (b'/', Some(b'*')) => {
                block_depth = 1;
                i += 2;
            }
            // A char literal ('x', '\n', '"'); a lifetime ('a) has no closing quote two bytes on.
            (b'\'', Some(b'\\')) => {
                i += 3;
                while i < b.len() && b[i] != b'\'' {
                    i += 1;
                }
                i += 1;
                out.push_str("' '");
            }
            (b'\'', Some(_)) if b.get(i + 2) == Some(&b'\'') => {
                i += 3;
                out.push_str("' '");
            }
            (b'"', _) => {
                i += 1;
                out.push('"');
                while i < b.len() && b[i] != b'"' {
                    if b[i] == b'\n' {
                        out.push('\n'); // keep line numbers
                    }
                    i += if b[i] == b'\\' { 2 } else { 1 };
                }
                i += 1;
                out.push('"');
            }
            _ => {
                out.push(char::from(c));
                i += 1;
            }
        }
    }
    out
}

/// Lines (1-based) where the keyword `unsafe` appears as a token.
fn unsafe_lines(source: &str) -> Vec<usize> {
    let code = code_only(source);
    let mut hits = Vec::new();
    for (n, line) in code.lines().enumerate() {
        let bytes = line.as_bytes();
        let mut from = 0;
        while let Some(p) = line[from..].find("unsafe") {
            let at = from + p;
            let before = at.checked_sub(1).map(|i| bytes[i]);
            let after = bytes.get(at + 6).copied();
            let word = |c: Option<u8>| c.is_some_and(|c| c.is_ascii_alphanumeric() || c == b'_');
            if !word(before) && !word(after) {
                hits.push(n + 1);
            }
            from = at + 6;
        }
    }
    hits
}

fn rust_files(dir: &Path, out: &mut Vec<PathBuf>) {
    let Ok(entries) = std::fs::read_dir(dir) else {
        return;
    };
    for e in entries {
        let path = e.unwrap().path();
        if path.is_dir() {
            rust_files(&path, out);
        } else if path.extension().is_some_and(|x| x == "rs") {
            out.push(path);
        }
    }
}

#[test]
fn our_crates_hold_no_unsafe_code_and_forbid_it() {
    let crates = workspace_root().join("crates");
    let mut roots = 0;
    let mut files = Vec::new();
    for entry in std::fs::read_dir(&crates).unwrap() {
        let krate = entry.unwrap().path();
        if !krate.join("Cargo.toml").is_file() {
            continue;
        }
        for sub in ["src", "benches", "examples"] {
            rust_files(&krate.join(sub), &mut files);
        }
        for root in ["src/lib.rs", "src/main.rs"] {
            let path = krate.join(root);
            if let Ok(text) = std::fs::read_to_string(&path) {
                assert!(
                    code_only(&text).contains("#![forbid(unsafe_code)]"),
                    "{} lacks #![forbid(unsafe_code)]",
                    path.display()
                );
                roots += 1;
            }
        }
    }
    assert!(
        roots >= 4 && files.len() >= 10,
        "found only {roots} crate roots and {} files",
        files.len()
    );
    let mut found = Vec::new();
    for path in &files {
        let text = std::fs::read_to_string(path).unwrap();
        for line in unsafe_lines(&text) {
            found.push(format!("{}:{line}", path.display()));
        }
    }
    assert!(found.is_empty(), "`unsafe` in our crates: {found:?}");
}

#[test]
fn the_unsafe_scan_sees_code_and_ignores_comments_and_strings() {
    let src = "// unsafe in a comment\nlet s = \"unsafe { }\";\n/* unsafe */ fn f() {}\nunsafe { g() }\npub unsafe fn h() {}\nlet unsafe_name = 1;\nlet q = b'\"'; unsafe impl Send for X {}\nfn l<'a>(x: &'a u8) { let c = '\\''; unsafe { } }\n";
    assert_eq!(unsafe_lines(src), vec![4, 5, 7, 8]);
}
