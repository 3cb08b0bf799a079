//! The demo report in a real browser (headless Chromium, Debian's `chromium`): every image
//! and link of the page resolves and a screenshot is written into the report folder; the same
//! check finds a missing plot, a missing waveform and a link to a missing section. Without
//! Chromium these tests fail and say how to install it: a report that was never opened is not
//! reported as checked.

use std::path::{Path, PathBuf};
use std::process::Command;

use lenz_harness::report::browser::check_page;

/// A new report folder of the demo under the test target's temporary folder.
fn demo_report(name: &str) -> PathBuf {
    let out = Path::new(env!("CARGO_TARGET_TMPDIR"))
        .join("report-browser")
        .join(name);
    let _ = std::fs::remove_dir_all(&out);
    let run = Command::new(env!("CARGO_BIN_EXE_lenz"))
        .args(["demo", "--out"])
        .arg(&out)
        .output()
        .expect("the lenz binary runs");
    assert_eq!(
        run.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );
    out
}

fn count(dir: &Path, ext: &str) -> usize {
    std::fs::read_dir(dir)
        .expect("folder")
        .filter_map(Result::ok)
        .filter(|e| e.path().extension().is_some_and(|x| x == ext))
        .count()
}

#[test]
fn the_demo_report_opens_with_every_image_and_link_resolving() {
    let out = demo_report("demo");
    let shot = out.join("screenshot.png");
    let c = check_page(&out.join("index.html"), &shot).unwrap_or_else(|e| panic!("{e}"));
    println!("demo report: {c}; screenshot {}", shot.display());
    assert!(c.ok(), "{c}");
    // One inline plot per scenario, each also linked with its waveform.
    let plots = count(&out.join("plots"), "svg");
    assert!(plots >= 10, "{plots} plots");
    assert_eq!(c.images, plots, "{c}");
    assert!(c.links >= 2 * plots + 2, "{c}");
    let png = std::fs::metadata(&shot).expect("screenshot").len();
    assert!(png > 10_000, "screenshot of {png} bytes");
}

#[test]
fn a_missing_plot_waveform_or_section_fails_the_check() {
    let out = demo_report("broken");
    let plot = out.join("plots/valve--two-open-close-cycles.svg");
    let wave = out.join("csv/relay--hot-coil-low-supply.csv");
    std::fs::remove_file(&plot).expect("plot removed");
    std::fs::remove_file(&wave).expect("waveform removed");
    let index = out.join("index.html");
    let page = std::fs::read_to_string(&index).expect("page");
    let anchor = "id=\"boost--start-up\"";
    assert!(page.contains(anchor));
    std::fs::write(&index, page.replace(anchor, "id=\"renamed\"")).expect("page written");

    let c = check_page(&index, &out.join("screenshot.png")).unwrap_or_else(|e| panic!("{e}"));
    println!("broken report: {c}");
    assert!(!c.ok());
    let has = |kind: &str, tail: &str| {
        c.broken
            .iter()
            .any(|b| b.starts_with(kind) && b.contains(tail))
    };
    assert!(
        has("image:", "plots/valve--two-open-close-cycles.svg"),
        "{c}"
    );
    assert!(
        has("link:", "plots/valve--two-open-close-cycles.svg"),
        "{c}"
    );
    assert!(has("link:", "csv/relay--hot-coil-low-supply.csv"), "{c}");
    assert!(has("anchor:", "#boost--start-up"), "{c}");
    // Nothing else is reported broken.
    for b in &c.broken {
        assert!(
            [
                "plots/valve--two-open-close-cycles.svg",
                "csv/relay--hot-coil-low-supply.csv",
                "#boost--start-up",
            ]
            .iter()
            .any(|t| b.ends_with(t)),
            "{b}"
        );
    }
}
