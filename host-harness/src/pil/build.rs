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
