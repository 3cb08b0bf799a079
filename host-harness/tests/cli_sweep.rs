//! `lenz sweep` and `lenz sweep-merge` from outside: the same seed gives the same result,
//! the number of jobs does not change it, shards merged give byte-for-byte the unsharded JSON,
//! and the worst run replays with `lenz sim --replay` to the same value.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn lenz(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_lenz"))
        .args(args)
        .output()
        .expect("lenz runs")
}

fn valve() -> String {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("scenarios/valve.toml")
        .to_str()
        .expect("utf-8 path")
        .to_string()
}

fn tmp(name: &str) -> PathBuf {
    let d = Path::new(env!("CARGO_TARGET_TMPDIR")).join(name);
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).expect("temp dir");
    d
}

fn sweep(extra: &[&str]) -> Output {
    let v = valve();
    let mut args = vec![
        "sweep",
        v.as_str(),
        "--runs",
        "24",
        "--seed",
        "11",
        "--json",
    ];
    args.extend_from_slice(extra);
    let out = lenz(&args);
    assert!(
        matches!(out.status.code(), Some(0 | 1)),
        "{args:?}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    // stderr is a pipe here, not a terminal: no progress bar.
    assert!(
        out.stderr.is_empty(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    out
}

#[test]
fn same_seed_same_result_whatever_the_jobs() {
    let a = sweep(&["--jobs", "1"]);
    let b = sweep(&["--jobs", "2"]);
    let c = sweep(&["--jobs", "1"]);
    assert_eq!(a.stdout, b.stdout, "1 and 2 jobs");
    assert_eq!(a.stdout, c.stdout, "same seed twice");
    let v: serde_json::Value = serde_json::from_slice(&a.stdout).expect("json");
    assert_eq!(v["records"].as_array().map(Vec::len), Some(24));
    // Another seed draws other part values.
    let other = lenz(&["sweep", &valve(), "--runs", "24", "--seed", "12", "--json"]);
    assert_ne!(a.stdout, other.stdout);
    // The runs really vary: the peak current spreads with supply, temperature and parts.
    let s = v["summary"]
        .as_array()
        .expect("summary")
        .iter()
        .find(|s| s["property"] == "peak_current")
        .expect("peak current");
    let (lo, hi) = (
        s["min"].as_f64().expect("min"),
        s["max"].as_f64().expect("max"),
    );
    assert!(hi > lo * 1.1, "{lo} … {hi}");
    let counts: u64 = s["histogram"]["counts"]
        .as_array()
        .expect("counts")
        .iter()
        .map(|c| c.as_u64().expect("count"))
        .sum();
    assert_eq!(
        counts + s["histogram"]["not_finite"].as_u64().expect("n"),
        24
    );
}

#[test]
fn sharded_then_merged_equals_unsharded() {
    let dir = tmp("sweep-shards");
    let whole = sweep(&[]);
    let mut files = Vec::new();
    for k in 1..=3 {
        let shard = format!("{k}/3");
        let out = sweep(&["--shard", &shard, "--jobs", "1"]);
        let p = dir.join(format!("shard{k}.json"));
        std::fs::write(&p, &out.stdout).expect("write");
        files.push(p.to_str().expect("utf-8").to_string());
    }
    // Merge in another order than the shards ran.
    let merged = lenz(&["sweep-merge", &files[2], &files[0], &files[1], "--json"]);
    assert_eq!(
        merged.status.code(),
        whole.status.code(),
        "{}",
        String::from_utf8_lossy(&merged.stderr)
    );
    assert_eq!(
        String::from_utf8_lossy(&merged.stdout),
        String::from_utf8_lossy(&whole.stdout),
        "byte for byte"
    );
    // A missing or doubled shard is bad input.
    for args in [
        vec!["sweep-merge", files[0].as_str(), files[1].as_str()],
        vec![
            "sweep-merge",
            files[0].as_str(),
            files[0].as_str(),
            files[1].as_str(),
        ],
    ] {
        let out = lenz(&args);
        assert_eq!(out.status.code(), Some(2), "{args:?}");
        assert!(out.stdout.is_empty());
        assert_eq!(
            String::from_utf8_lossy(&out.stderr)
                .trim_end()
                .lines()
                .count(),
            1
        );
    }
}

#[test]
fn the_worst_run_replays() {
    let out = sweep(&[]);
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).expect("json");
    let s = v["summary"]
        .as_array()
        .expect("summary")
        .iter()
        .find(|s| s["property"] == "estimator_error" && s["scenario"] == "two open-close cycles")
        .expect("estimator error");
    let worst = &s["worst"];
    let index = worst["index"].as_u64().expect("index");
    assert!(
        worst["replay"]
            .as_str()
            .expect("replay")
            .ends_with(&format!("--replay 11:{index}"))
    );
    let replay = lenz(&[
        "sim",
        &valve(),
        "--replay",
        &format!("11:{index}"),
        "--json",
    ]);
    let r: serde_json::Value = serde_json::from_slice(&replay.stdout).expect("json");
    let got = r["scenarios"]
        .as_array()
        .expect("scenarios")
        .iter()
        .find(|sc| sc["scenario"] == "two open-close cycles")
        .and_then(|sc| {
            sc["properties"]
                .as_array()?
                .iter()
                .find(|p| p["name"] == "estimator_error")?["value"]
                .as_f64()
        })
        .expect("value");
    assert_eq!(
        Some(got),
        worst["value"].as_f64(),
        "replay gives the sweep's value"
    );
    assert_eq!(r["replay"]["params"], worst["params"]);
}

#[test]
fn bad_arguments_exit_2() {
    for args in [
        vec!["sweep", "x.toml"],
        vec!["sweep", "no/such.toml", "--runs", "3"],
        vec!["sweep", "ARG", "--runs", "0"],
        vec!["sweep", "ARG", "--runs", "3", "--jobs", "0"],
        vec!["sweep", "ARG", "--runs", "3", "--shard", "4/3"],
    ] {
        let v = valve();
        let args: Vec<&str> = args
            .into_iter()
            .map(|a| if a == "ARG" { v.as_str() } else { a })
            .collect();
        let out = lenz(&args);
        assert_eq!(out.status.code(), Some(2), "{args:?}");
        assert!(out.stdout.is_empty(), "{args:?}");
        assert_eq!(
            String::from_utf8_lossy(&out.stderr)
                .trim_end()
                .lines()
                .count(),
            1
        );
    }
}

#[test]
fn histograms_as_svg() {
    let dir = tmp("sweep-plot");
    let out = lenz(&[
        "sweep",
        &valve(),
        "--runs",
        "12",
        "--seed",
        "5",
        "--plot",
        dir.to_str().expect("utf-8"),
    ]);
    assert!(matches!(out.status.code(), Some(0 | 1)));
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.contains("runs passed every property"), "{text}");
    let svg = std::fs::read_to_string(dir.join("two-open-close-cycles--peak-current.svg"))
        .expect("histogram");
    assert!(svg.starts_with("<svg"));
    assert!(svg.contains("12 runs") && svg.contains("\nlimit\n") && svg.contains("<rect"));
}

#[test]
fn shards_of_one_file_merge_however_its_path_was_spelled() {
    let dir = tmp("sweep-spelling");
    let text = std::fs::read_to_string(valve()).expect("valve");
    std::fs::write(dir.join("valve.toml"), &text).expect("copy");
    let run = |file: &str, shard: &str| {
        let out = Command::new(env!("CARGO_BIN_EXE_lenz"))
            .current_dir(&dir)
            .args([
                "sweep", file, "--runs", "6", "--seed", "3", "--shard", shard, "--json",
            ])
            .output()
            .expect("lenz runs");
        assert!(matches!(out.status.code(), Some(0 | 1)));
        out.stdout
    };
    // The same file as `valve.toml`, `./valve.toml` and by its full path.
    let full = dir.join("valve.toml");
    let shards = [
        run("valve.toml", "1/3"),
        run("./valve.toml", "2/3"),
        run(full.to_str().expect("utf-8"), "3/3"),
    ];
    let mut files = Vec::new();
    for (k, s) in shards.iter().enumerate() {
        let p = dir.join(format!("shard{k}.json"));
        std::fs::write(&p, s).expect("write");
        files.push(p.to_str().expect("utf-8").to_string());
    }
    let merged = lenz(&["sweep-merge", &files[0], &files[1], &files[2], "--json"]);
    assert!(
        matches!(merged.status.code(), Some(0 | 1)),
        "{}",
        String::from_utf8_lossy(&merged.stderr)
    );
    let whole = Command::new(env!("CARGO_BIN_EXE_lenz"))
        .current_dir(&dir)
        .args([
            "sweep",
            "valve.toml",
            "--runs",
            "6",
            "--seed",
            "3",
            "--json",
        ])
        .output()
        .expect("lenz runs");
    assert_eq!(
        String::from_utf8_lossy(&merged.stdout),
        String::from_utf8_lossy(&whole.stdout),
        "named as the first shard names it, byte for byte"
    );
    // Another file's contents under the same name is still refused.
    std::fs::write(dir.join("valve.toml"), format!("{text}\n# changed\n")).expect("edit");
    let changed = run("valve.toml", "3/3");
    std::fs::write(dir.join("shard2.json"), changed).expect("write");
    let out = lenz(&["sweep-merge", &files[0], &files[1], &files[2]]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        String::from_utf8_lossy(&out.stderr).contains("is of another file"),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
}
