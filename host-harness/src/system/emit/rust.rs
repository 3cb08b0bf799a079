//! Rust form of emitted constants: `pub const` items, each the kernel's configuration built
//! with its `const fn from_raw` from a named-field `Raw` struct, so it lives in flash.

use std::fmt::Write as _;

use super::{Emitted, Value, preamble};

/// The Rust source of `e`: a file to `include!` or to keep as a module of the firmware
/// (depends on the `lenz` crate only).
#[must_use]
pub fn render(e: &Emitted) -> String {
    let mut s = String::new();
    for l in preamble(e) {
        let _ = writeln!(s, "// {l}");
    }
    for c in &e.constants {
        s.push('\n');
        for l in &c.from {
            let _ = writeln!(s, "/// From: {l}.");
        }
        let _ = write!(
            s,
            "pub const {}: {t} = {t}::from_raw(",
            c.name,
            t = c.rust_config
        );
        value(&mut s, &c.value, 0);
        s.push_str(");\n");
    }
    s
}

fn indent(s: &mut String, depth: usize) {
    for _ in 0..depth {
        s.push_str("    ");
    }
}

fn value(s: &mut String, v: &Value, depth: usize) {
    match v {
        Value::Int { v, .. } => {
            let _ = write!(s, "{v}");
        }
        Value::Bool(b) => {
            let _ = write!(s, "{b}");
        }
        Value::Variant { rust, .. } => s.push_str(rust),
        Value::Optional(None) => s.push_str("None"),
        Value::Optional(Some(x)) => {
            s.push_str("Some(");
            value(s, x, depth);
            s.push(')');
        }
        Value::Array(xs) => {
            s.push('[');
            for (k, x) in xs.iter().enumerate() {
                if k > 0 {
                    s.push_str(", ");
                }
                value(s, x, depth);
            }
            s.push(']');
        }
        Value::Struct(st) => {
            let _ = writeln!(s, "{} {{", st.rust);
            for f in &st.fields {
                if let Some(name) = f.rust {
                    indent(s, depth + 1);
                    let _ = write!(s, "{name}: ");
                    value(s, &f.value, depth + 1);
                    s.push_str(",\n");
                }
            }
            indent(s, depth);
            s.push('}');
        }
    }
}
