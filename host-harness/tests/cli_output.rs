//! Where `lenz` writes, from outside: a stdout that cannot be written never panics (a closed
//! pipe ends quietly with the command's exit code, another error is exit 2 with a message);
//! output paths are checked before any work and a failure leaves no files and prints nothing
//! on stdout, naming the flag the user gave; every scenario gets its own CSV and SVG file even
//! when names differ only in case, punctuation or non-ASCII letters, or files share a name.

use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};

fn lenz(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_lenz"))
        .args(args)
        .output()
        .expect("lenz runs")
}

fn valve() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("scenarios/valve.toml")
}

fn tmp(name: &str) -> PathBuf {
    let d = Path::new(env!("CARGO_TARGET_TMPDIR")).join(name);
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).expect("temp dir");
    d
}

fn s(p: &Path) -> &str {
    p.to_str().expect("utf-8 path")
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

/// Every entry under `dir`, relative, sorted.
fn tree(dir: &Path) -> Vec<String> {
    let mut out = Vec::new();
    let mut todo = vec![dir.to_path_buf()];
    while let Some(d) = todo.pop() {
        for e in std::fs::read_dir(&d).expect("readable").flatten() {
            let p = e.path();
            out.push(
                p.strip_prefix(dir)
                    .expect("below")
                    .to_string_lossy()
                    .into_owned(),
            );
            if p.is_dir() {
                todo.push(p);
            }
        }
    }
    out.sort();
    out
}

fn commands() -> Vec<Vec<String>> {
    let v = s(&valve()).to_string();
    [
        vec!["sim", &v],
        vec!["sim", &v, "--json"],
        vec!["plan", &v],
        vec!["sweep", &v, "--runs", "2", "--json"],
        vec![
            "coil",
            "--inductance",
            "120m",
            "--resistance",
            "48",
            "--supply",
            "24",
        ],
        vec!["demo", "--json"],
        vec!["--help"],
        vec!["sim", "--help"],
        vec![
            "trip-time",
            "--curve",
            "iec-vi",
            "--pickup",
            "1",
            "--multiplier",
            "0.1",
            "--current",
            "3",
        ],
    ]
    .iter()
    .map(|a| a.iter().map(|x| (*x).to_string()).collect())
    .collect()
}

#[cfg(target_os = "linux")]
#[test]
fn a_full_stdout_is_exit_2_with_a_message() {
    for args in commands() {
        let full = std::fs::OpenOptions::new()
            .write(true)
            .open("/dev/full")
            .expect("/dev/full on Linux");
        let out = Command::new(env!("CARGO_BIN_EXE_lenz"))
            .args(&args)
            .stdout(full)
            .output()
            .expect("lenz runs");
        let err = stderr(&out);
        assert_eq!(out.status.code(), Some(2), "{args:?}: {err}");
        assert!(
            err.starts_with("lenz: cannot write to standard output:"),
            "{args:?}: {err}"
        );
        assert_eq!(err.trim_end().lines().count(), 1, "{args:?}: {err}");
    }
}

#[test]
fn a_closed_pipe_ends_quietly_with_the_commands_exit_code() {
    for args in commands() {
        let expected = lenz(&args.iter().map(String::as_str).collect::<Vec<_>>());
        let mut child = Command::new(env!("CARGO_BIN_EXE_lenz"))
            .args(&args)
            .stdout(Stdio::piped())
            .stderr(Stdio::piped())
            .spawn()
            .expect("lenz starts");
        // The reader goes away before lenz has written anything (as `| head -c 0` would).
        drop(child.stdout.take());
        let out = child.wait_with_output().expect("lenz ends");
        assert_eq!(out.status.code(), expected.status.code(), "{args:?}");
        assert!(out.stderr.is_empty(), "{args:?}: {}", stderr(&out));
    }
}

#[test]
fn output_paths_are_checked_before_any_work() {
    let dir = tmp("out-paths");
    let afile = dir.join("afile");
    std::fs::write(&afile, "not a folder").expect("file");
    let fresh = dir.join("fresh/csv");
    let v = valve();
    for (args, flag) in [
        (vec!["demo", "--out", s(&afile)], "--out"),
        (
            vec!["sim", s(&v), "--csv", s(&fresh), "--plot", s(&afile)],
            "--plot",
        ),
        (vec!["sim", s(&v), "--csv", s(&afile)], "--csv"),
        (
            vec!["sim", s(&v), "--csv", s(&fresh), "--junit", s(&dir)],
            "--junit",
        ),
        (
            vec!["sim", s(&v), "--junit", s(&afile.join("j.xml"))],
            "--junit",
        ),
        (
            vec!["sweep", s(&v), "--runs", "2", "--plot", s(&afile)],
            "--plot",
        ),
    ] {
        let out = lenz(&args);
        let err = stderr(&out);
        assert_eq!(out.status.code(), Some(2), "{args:?}: {err}");
        assert!(out.stdout.is_empty(), "{args:?}");
        assert!(
            err.starts_with(&format!("lenz: {flag} ")),
            "{args:?}: {err}"
        );
        assert_eq!(err.trim_end().lines().count(), 1, "{err}");
        // Nothing was left behind: no folder created for the other flags, no staging files.
        assert_eq!(tree(&dir), vec!["afile".to_string()], "{args:?}");
    }
}

#[test]
fn written_outputs_are_complete_and_nothing_is_staged_behind() {
    let dir = tmp("out-complete");
    let v = valve();
    let out = lenz(&[
        "sim",
        s(&v),
        "--csv",
        s(&dir),
        "--plot",
        s(&dir),
        "--junit",
        s(&dir.join("junit.xml")),
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let files = tree(&dir);
    let text = std::fs::read_to_string(&v).expect("valve");
    let scenarios = text.matches("[[scenario]]").count();
    assert!(scenarios >= 2);
    assert_eq!(
        files.iter().filter(|f| f.ends_with(".csv")).count(),
        scenarios
    );
    assert_eq!(
        files.iter().filter(|f| f.ends_with(".svg")).count(),
        scenarios
    );
    assert_eq!(files.len(), 2 * scenarios + 1, "{files:?}");
}

#[test]
fn scenarios_whose_names_map_alike_get_their_own_files() {
    let dir = tmp("out-names");
    let text = std::fs::read_to_string(valve()).expect("valve");
    let head = &text[..text.find("[[scenario]]").expect("a scenario")];
    let scenario = |name: &str, ms: u32| {
        format!(
            "[[scenario]]\nname = \"{name}\"\nduration = \"{ms}ms\"\n[[scenario.event]]\n\
             at = \"1ms\"\ncommand = \"on\"\n[[scenario.check]]\nproperty = \"peak-current\"\n\
             max = \"2A\"\n"
        )
    };
    // Case, punctuation and non-ASCII letters; each scenario a different length, so each file
    // can be told apart by its row count.
    let body = [
        scenario("Cold coil", 2),
        scenario("cold-coil", 3),
        scenario("Ventil ä", 4),
        scenario("Ventil ö", 5),
    ]
    .concat();
    for sub in ["a", "b"] {
        std::fs::create_dir_all(dir.join(sub)).expect("dir");
        std::fs::write(dir.join(sub).join("valve.toml"), format!("{head}{body}")).expect("write");
    }
    let (a, b) = (dir.join("a/valve.toml"), dir.join("b/valve.toml"));
    let (csv, junit) = (dir.join("csv"), dir.join("junit.xml"));
    let out = lenz(&["sim", s(&a), s(&b), "--csv", s(&csv), "--junit", s(&junit)]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let files = tree(&csv);
    assert_eq!(files.len(), 8, "one file per scenario: {files:?}");
    let mut rows: Vec<usize> = files
        .iter()
        .map(|f| {
            std::fs::read_to_string(csv.join(f))
                .expect("csv")
                .lines()
                .count()
                - 1
        })
        .collect();
    rows.sort_unstable();
    // 100 µs tick: 20, 30, 40 and 50 rows, twice (one per file).
    assert_eq!(rows, vec![20, 20, 30, 30, 40, 40, 50, 50]);
    let xml = std::fs::read_to_string(&junit).expect("junit");
    for f in [&a, &b] {
        for name in ["Cold coil", "cold-coil", "Ventil ä", "Ventil ö"] {
            let case = format!("classname=\"{}: {name}\"", s(f));
            assert_eq!(xml.matches(&case).count(), 2, "{case}");
        }
    }
    // The sweep's histograms: one file per scenario and property.
    let hist = dir.join("hist");
    let out = lenz(&["sweep", s(&a), "--runs", "2", "--plot", s(&hist), "--json"]);
    assert!(matches!(out.status.code(), Some(0 | 1)), "{}", stderr(&out));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).expect("json");
    let summaries = v["summary"].as_array().map_or(0, Vec::len);
    assert_eq!(summaries, 8, "peak current and no trip, four scenarios");
    assert_eq!(tree(&hist).len(), summaries);
}

#[test]
fn a_run_that_fails_half_way_leaves_no_files() {
    let dir = tmp("out-half-way");
    let text = std::fs::read_to_string(valve()).expect("valve");
    // Read fine, refused when the second file's plant is built: the first file's scenarios
    // have been run and their waveforms staged by then.
    let coil = text.find("[system.coil]").expect("coil table");
    let eol = coil + text[coil..].find('\n').expect("line end") + 1;
    let bad = format!("{}knee_current = \"1A\"\n{}", &text[..eol], &text[eol..]);
    let second = dir.join("second.toml");
    std::fs::write(&second, bad).expect("write");
    let out_dir = dir.join("out");
    let v = valve();
    let out = lenz(&[
        "sim",
        s(&v),
        s(&second),
        "--csv",
        s(&out_dir),
        "--plot",
        s(&out_dir),
        "--junit",
        s(&out_dir.join("junit.xml")),
    ]);
    let err = stderr(&out);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(err.contains("second.toml"), "{err}");
    assert!(out.stdout.is_empty());
    assert_eq!(tree(&dir), vec!["second.toml".to_string()]);
}
