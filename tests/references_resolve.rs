//! Every citation of the reference sheet in the repository resolves: a check value
//! (`CHECKS C4.2`, or `C4.2` alone), a formula (`F2.1`), a pitfall (`Findings 4`) or a source
//! key after a label (`published: IEC151`, `from memory: SLVA372`) must name an entry of
//! `docs/references.md`. A citation that names nothing there fails this test with its file and
//! line.

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};

use regex::Regex;

/// The entries of the sheet: check IDs, formula IDs, finding numbers and source keys.
struct Sheet {
    checks: BTreeSet<String>,
    formulas: BTreeSet<String>,
    findings: BTreeSet<u32>,
    keys: BTreeSet<String>,
}

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn sheet() -> Sheet {
    let text = std::fs::read_to_string(root().join("docs/references.md"))
        .expect("docs/references.md is part of the repository");
    let checks = Regex::new(r"(?m)^### (C[1-9]\.[0-9]{1,2}) ").unwrap();
    let formulas = Regex::new(r"(?m)^- \*\*(F[1-9]\.[0-9]{1,2})\*\*").unwrap();
    let keys = Regex::new(r"(?m)^\| ([A-Z][A-Z0-9]+) \| ").unwrap();
    let findings_part = text.split("\n## Findings").nth(1).unwrap_or("");
    let findings = Regex::new(r"(?m)^([0-9]{1,2})\. \*\*").unwrap();
    Sheet {
        checks: checks
            .captures_iter(&text)
            .map(|c| c[1].to_string())
            .collect(),
        formulas: formulas
            .captures_iter(&text)
            .map(|c| c[1].to_string())
            .collect(),
        findings: findings
            .captures_iter(findings_part)
            .filter_map(|c| c[1].parse().ok())
            .collect(),
        keys: keys
            .captures_iter(&text)
            .map(|c| c[1].to_string())
            .filter(|k| k != "Key")
            .collect(),
    }
}

/// The unresolved citations of one text, as `(line, citation)`.
fn unresolved(sheet: &Sheet, text: &str) -> Vec<(usize, String)> {
    let check = Regex::new(r"(?:^|[^A-Za-z0-9_.])(C[1-9]\.[0-9]{1,2})(?:[^0-9]|$)").unwrap();
    let formula = Regex::new(r"(?:^|[^A-Za-z0-9_.])(F[1-9]\.[0-9]{1,2})(?:[^0-9]|$)").unwrap();
    let finding = Regex::new(r"Findings ([0-9]{1,2})\b").unwrap();
    let key = Regex::new(r"(?:published(?: form)?|from memory): ([A-Z][A-Z0-9]+)\b").unwrap();
    let mut bad = Vec::new();
    for (n, line) in text.lines().enumerate() {
        // A sheet outside the repository cannot be followed by a reader of the repository.
        for outside in ["CHECKS.md", "shared/reference"] {
            if line.contains(outside) {
                bad.push((n + 1, outside.to_string()));
            }
        }
        for c in check.captures_iter(line) {
            if !sheet.checks.contains(&c[1]) {
                bad.push((n + 1, c[1].to_string()));
            }
        }
        for c in formula.captures_iter(line) {
            if !sheet.formulas.contains(&c[1]) {
                bad.push((n + 1, c[1].to_string()));
            }
        }
        for c in finding.captures_iter(line) {
            if c[1]
                .parse()
                .map_or(true, |k: u32| !sheet.findings.contains(&k))
            {
                bad.push((n + 1, format!("Findings {}", &c[1])));
            }
        }
        for c in key.captures_iter(line) {
            if !sheet.keys.contains(&c[1]) {
                bad.push((n + 1, c[1].to_string()));
            }
        }
    }
    bad
}

/// Source, documentation and scenario files of the repository, without build output (cargo
/// marks its target folders with `CACHEDIR.TAG`) and generated reports.
fn files(dir: &Path, out: &mut Vec<PathBuf>) {
    let Ok(entries) = std::fs::read_dir(dir) else {
        return;
    };
    for e in entries.flatten() {
        let p = e.path();
        let name = e.file_name();
        let name = name.to_string_lossy();
        if p.is_dir() {
            if name.starts_with('.') || name == "lenz-report" || p.join("CACHEDIR.TAG").exists() {
                continue;
            }
            files(&p, out);
        } else if [".rs", ".md", ".toml"].iter().any(|x| name.ends_with(x))
            // This file cites made-up entries on purpose (the test that the scan can fail).
            && name != "references_resolve.rs"
        {
            out.push(p);
        }
    }
}

#[test]
fn the_sheet_has_every_section() {
    let s = sheet();
    // Sections 1–5 of the sheet: 5 + 7 + 6 + 5 + 2 check tables.
    assert_eq!(s.checks.len(), 25, "{:?}", s.checks);
    assert_eq!(s.formulas.len(), 5 + 7 + 6 + 5, "{:?}", s.formulas);
    assert_eq!(s.findings, (1..=10).collect(), "findings 1–10");
    for k in [
        "IEC151", "C37", "IEC149", "IEC28", "EM", "SLVA372", "TOSH", "IFX", "RELAY",
    ] {
        assert!(s.keys.contains(k), "source key {k} missing");
    }
}

#[test]
fn a_citation_of_a_missing_entry_is_caught() {
    // The scan must be able to fail: made-up entries of each kind are reported.
    let s = sheet();
    let text = "ok: CHECKS C2.1, F2.1, Findings 4, published: IEC151\n\
                bad: CHECKS C9.9 and F7.1, Findings 42, from memory: NOSUCHKEY\n\
                see shared/reference/CHECKS.md\n";
    let bad = unresolved(&s, text);
    let names: Vec<&str> = bad.iter().map(|b| b.1.as_str()).collect();
    assert_eq!(
        names,
        [
            "C9.9",
            "F7.1",
            "Findings 42",
            "NOSUCHKEY",
            "CHECKS.md",
            "shared/reference"
        ]
    );
    assert!(bad.iter().take(4).all(|b| b.0 == 2));
    // Standard numbers and versions are not citations.
    assert!(unresolved(&s, "IEEE C37.112-1996, rust 1.88, v0.1.0").is_empty());
}

#[test]
fn every_citation_in_the_repository_resolves() {
    let s = sheet();
    let mut list = Vec::new();
    files(&root(), &mut list);
    assert!(list.len() > 50, "the scan found only {} files", list.len());
    let mut cited = 0usize;
    let mut bad = Vec::new();
    for f in &list {
        let Ok(text) = std::fs::read_to_string(f) else {
            continue;
        };
        cited += text.matches("CHECKS").count();
        for (line, c) in unresolved(&s, &text) {
            let rel = f.strip_prefix(root()).unwrap_or(f);
            bad.push(format!("{}:{line}: {c}", rel.display()));
        }
    }
    assert!(
        cited > 20,
        "only {cited} citations found: is the scan looking in the right place?"
    );
    assert!(
        bad.is_empty(),
        "citations that name no entry of docs/references.md:\n{}",
        bad.join("\n")
    );
}
