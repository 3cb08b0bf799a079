//! Links the images with the runtime's `link.x` (on the search path from `lenz-pil`).

fn main() {
    println!("cargo::rustc-link-arg-bins=-Tlink.x");
}
