//! Building the example images of `pil/images` for a core (the same toolchain and profile as
//! the target images, [`crate::firmware::Toolchain`]).

use std::path::PathBuf;

use crate::firmware::{Target, Toolchain, target_dir, workspace_root};

/// The Rust example image: the coil driver of `lenz::drive`.
pub const COIL_DRIVER: &str = "coil-driver";

/// Builds the example image `bin` for `target` (release) and returns its path.
///
/// # Errors
///
/// The build failed (its output was shown on the terminal).
pub fn build_image(tc: &Toolchain, target: Target, bin: &str) -> Result<PathBuf, String> {
    let manifest = workspace_root()
        .join("pil")
        .join("images")
        .join("Cargo.toml");
    let status = tc
        .cargo_command(target)
        .arg("build")
        .arg("--quiet")
        .arg("--release")
        .arg("--manifest-path")
        .arg(manifest)
        .args(["--target", target.triple(), "--bin", bin])
        .status()
        .map_err(|e| format!("{}: could not start cargo: {e}", target.triple()))?;
    if !status.success() {
        return Err(format!(
            "building the image {bin} for {} failed ({status})",
            target.triple()
        ));
    }
    Ok(target_dir().join(target.triple()).join("release").join(bin))
}

/// Builds the C API's static library with the in-the-loop runtime (`lenz-ffi`, feature `pil`)
/// for `target`, with the images' profile, and returns a copy of it
/// (`target/firmware/pil-c/<triple>/liblenz_ffi_pil.a`, so the C API's own checks keep their
/// library).
///
/// # Errors
///
/// The build failed (its output was shown on the terminal), or the copy.
pub fn build_ffi_runtime(tc: &Toolchain, target: Target) -> Result<PathBuf, String> {
    let status = tc
        .cargo_command(target)
        .env("CARGO_PROFILE_RELEASE_OPT_LEVEL", "s")
        .env("CARGO_PROFILE_RELEASE_CODEGEN_UNITS", "1")
        .arg("build")
        .arg("--quiet")
        .arg("--release")
        .arg("--manifest-path")
        .arg(workspace_root().join("Cargo.toml"))
        .args(["--target", target.triple(), "-p", "lenz-ffi", "--lib"])
        .args(["--features", "pil"])
        .status()
        .map_err(|e| format!("{}: could not start cargo: {e}", target.triple()))?;
    if !status.success() {
        return Err(format!(
            "building lenz-ffi with the runtime for {} failed ({status})",
            target.triple()
        ));
    }
    let built = target_dir()
        .join(target.triple())
        .join("release")
        .join("liblenz_ffi.a");
    let dir = target_dir().join("pil-c").join(target.triple());
    std::fs::create_dir_all(&dir).map_err(|e| format!("{}: {e}", dir.display()))?;
    let copy = dir.join("liblenz_ffi_pil.a");
    std::fs::copy(&built, &copy).map_err(|e| format!("copying {}: {e}", built.display()))?;
    Ok(copy)
}
