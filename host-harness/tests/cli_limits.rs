//! Scenario files have stated size limits (1 MiB, 1 000 scenarios, 10 000 events per
//! scenario), so reading, planning and running one takes bounded memory: beyond them `lenz`
//! stops with exit 2 and says which limit, before any work.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn lenz(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_lenz"))
        .args(args)
        .output()
        .expect("lenz runs")
}

/// The valve file's system, controller and tolerances, without its scenarios.
fn head() -> String {
    let text =
        std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("scenarios/valve.toml"))
            .expect("valve");
    text[..text.find("[[scenario]]").expect("a scenario")].to_string()
}

fn scenario(name: &str, events: usize) -> String {
    let mut s = format!("[[scenario]]\nname = \"{name}\"\nduration = \"30s\"\n");
    for k in 0..events {
        let c = if k % 2 == 0 { "on" } else { "off" };
        s.push_str(&format!(
            "[[scenario.event]]\nat = \"{}ms\"\ncommand = \"{c}\"\n",
            k + 1
        ));
    }
    s.push_str("[[scenario.check]]\nproperty = \"peak-current\"\nmax = \"2A\"\n");
    s
}

fn write(name: &str, text: &str) -> PathBuf {
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR")).join("limits");
    std::fs::create_dir_all(&dir).expect("dir");
    let p = dir.join(name);
    std::fs::write(&p, text).expect("write");
    p
}

fn rejected(p: &Path, wanted: &str) {
    for cmd in ["sim", "plan", "sweep"] {
        let mut args = vec![cmd, p.to_str().expect("utf-8")];
        if cmd == "sweep" {
            args.extend(["--runs", "1"]);
        }
        let out = lenz(&args);
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{args:?}: {err}");
        assert!(out.stdout.is_empty(), "{args:?}");
        assert!(err.contains(wanted), "{args:?}: wanted {wanted:?} in {err}");
        assert_eq!(err.trim_end().lines().count(), 1, "{err}");
    }
}

#[test]
fn a_file_over_one_mebibyte_is_refused_unread() {
    let mut text = head();
    text.push_str(&scenario("big", 2));
    // Padding with comments: valid TOML, only too long.
    while text.len() <= 1 << 20 {
        text.push_str("# padding padding padding padding padding padding padding padding\n");
    }
    let p = write("big.toml", &text);
    rejected(&p, "the limit of a scenario file");
}

#[test]
fn too_many_scenarios_or_events_are_named() {
    let body: String = (0..1001).map(|k| scenario(&format!("s{k}"), 0)).collect();
    let p = write("many-scenarios.toml", &format!("{}{body}", head()));
    rejected(
        &p,
        "key `scenario`: 1001 scenarios; a file has at most 1000",
    );
    let p = write(
        "many-events.toml",
        &format!("{}{}", head(), scenario("busy", 10_001)),
    );
    rejected(
        &p,
        "key `scenario[0].event`: 10001 events; a scenario has at most 10000",
    );
    // At the limits, the file is accepted (a short scenario file, well below 1 MiB).
    let p = write(
        "busy-but-fine.toml",
        &format!("{}{}", head(), scenario("busy", 10_000)),
    );
    let out = lenz(&["plan", p.to_str().expect("utf-8")]);
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
}
