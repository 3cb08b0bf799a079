//! `lenz sim --firmware` from outside, for what needs no emulator: every bad image or flag
//! exits 2 with one line on stderr naming it, nothing on stdout. (The images in the loop run
//! in `cargo xtask pil`, which builds them.)

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
        .join("scenarios")
        .join("valve.toml")
        .display()
        .to_string()
}

/// A 32-bit little-endian Arm ELF header with `entry` and `flags` and no sections.
fn elf(name: &str, entry: u32, flags: u32) -> PathBuf {
    let mut b = vec![0u8; 52];
    b[..4].copy_from_slice(b"\x7fELF");
    b[4] = 1;
    b[5] = 1;
    b[18..20].copy_from_slice(&40u16.to_le_bytes());
    b[24..28].copy_from_slice(&entry.to_le_bytes());
    b[36..40].copy_from_slice(&flags.to_le_bytes());
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR")).join("cli-pil");
    std::fs::create_dir_all(&dir).expect("temp dir");
    let p = dir.join(name);
    std::fs::write(&p, b).expect("write");
    p
}

fn fails_with(args: &[&str], want: &[&str]) {
    let out = lenz(args);
    assert_eq!(out.status.code(), Some(2), "{args:?}");
    assert!(out.stdout.is_empty(), "{args:?}");
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(err.trim_end().lines().count(), 1, "{err}");
    for w in want {
        assert!(err.contains(w), "{args:?}: {err}");
    }
}

#[test]
fn bad_images_and_flags_exit_2_naming_them() {
    let v = valve();
    let manifest = concat!(env!("CARGO_MANIFEST_DIR"), "/Cargo.toml");
    fails_with(
        &["sim", &v, "--firmware", manifest, "--core", "m0"],
        &["--firmware", "Cargo.toml", "not an ELF"],
    );
    fails_with(
        &["sim", &v, "--firmware", "no/such.elf", "--core", "m3"],
        &["--firmware no/such.elf"],
    );
    let arm_mode = elf("arm-mode.elf", 0x100, 0);
    fails_with(
        &[
            "sim",
            &v,
            "--firmware",
            arm_mode.to_str().unwrap(),
            "--core",
            "m3",
        ],
        &["--core m3", "not a thumb address"],
    );
    let hard = elf("hard-float.elf", 0x101, 0x400);
    fails_with(
        &[
            "sim",
            &v,
            "--firmware",
            hard.to_str().unwrap(),
            "--core",
            "m0",
        ],
        &["--core m0", "floating-point", "Cortex-M0"],
    );
    let h = hard.to_str().unwrap();
    fails_with(&["sim", &v, "--firmware", h], &["--core"]);
    fails_with(&["sim", &v, "--firmware", h, "--core", "m7"], &["m7"]);
    fails_with(
        &["sim", &v, "--firmware", h, "--core", "m4f", "--clock", "0"],
        &["'0'", "clock"],
    );
    fails_with(
        &[
            "sim",
            &v,
            "--firmware",
            h,
            "--core",
            "m4f",
            "--tick-fraction",
            "0.5",
        ],
        &["--clock"],
    );
    fails_with(
        &[
            "sim",
            &v,
            "--firmware",
            h,
            "--core",
            "m4f",
            "--clock",
            "80",
            "--tick-fraction",
            "1.5",
        ],
        &["1.5"],
    );
    fails_with(
        &[
            "sim",
            &v,
            "--firmware",
            h,
            "--core",
            "m4f",
            "--tick-budget",
            "0",
        ],
        &["0"],
    );
    fails_with(&["sim", &v, "--core", "m0"], &["--firmware"]);
}
