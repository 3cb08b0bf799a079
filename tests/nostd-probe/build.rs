//! The probe uses the C runtime's start files and libc only for `main`'s entry and exit code;
//! rustc passes `-nodefaultlibs` for a no_std binary, so libc is named here.
fn main() {
    println!("cargo:rustc-link-arg-bins=-lc");
}
