//! C form of emitted constants: a header of `static const` initialisers of the C API's raw
//! structs (`ffi/include/lenz.h`), with designated initialisers so a field cannot shift.

use std::fmt::Write as _;
use std::path::Path;

use super::{Emitted, Value, preamble};
use crate::system::SetupError;

/// The C header of `e` (C11; includes `lenz.h`). `guard` names the include guard.
///
/// # Errors
///
/// A value the C API cannot take: a coil driver with an armature movement detector (the C
/// API plans none).
pub fn render(e: &Emitted, guard: &str) -> Result<String, SetupError> {
    let mut s = String::new();
    for l in preamble(e) {
        let _ = writeln!(s, "/* {} */", l.replace("*/", "* /"));
    }
    let _ = writeln!(s, "#ifndef {guard}\n#define {guard}\n\n#include \"lenz.h\"");
    for c in &e.constants {
        let Value::Struct(st) = &c.value else {
            return Err(SetupError::new(format!("{}: not a struct", c.name)));
        };
        s.push('\n');
        for l in &c.from {
            let _ = writeln!(s, "/* From: {}. */", l.replace("*/", "* /"));
        }
        let _ = write!(s, "static const {} {} = ", st.c, c.name);
        value(&mut s, &c.value, 0, &c.name)?;
        s.push_str(";\n");
    }
    let _ = writeln!(s, "\n#endif /* {guard} */");
    Ok(s)
}

fn indent(s: &mut String, depth: usize) {
    for _ in 0..depth {
        s.push_str("    ");
    }
}

fn value(s: &mut String, v: &Value, depth: usize, name: &str) -> Result<(), SetupError> {
    match v {
        Value::Int { v, unsigned: true } => {
            let _ = write!(s, "{v}u");
        }
        // The most negative int32_t has no literal of its own type.
        Value::Int { v, unsigned: false } if *v == i64::from(i32::MIN) => {
            s.push_str("(-2147483647 - 1)");
        }
        Value::Int { v, unsigned: false } => {
            let _ = write!(s, "{v}");
        }
        Value::Bool(b) => s.push(if *b { '1' } else { '0' }),
        Value::Variant { c, .. } => {
            let _ = write!(s, "{c}");
        }
        Value::Optional(None) => {}
        Value::Optional(Some(_)) => {
            return Err(SetupError::new(format!(
                "{name}: the C API plans no armature movement detector; emit --lang rust"
            )));
        }
        Value::Array(xs) => {
            s.push('{');
            for (k, x) in xs.iter().enumerate() {
                if k > 0 {
                    s.push_str(", ");
                }
                value(s, x, depth, name)?;
            }
            s.push('}');
        }
        Value::Struct(st) => {
            s.push_str("{\n");
            for f in &st.fields {
                match (f.c, &f.value) {
                    (Some(field), x) => {
                        indent(s, depth + 1);
                        let _ = write!(s, ".{field} = ");
                        value(s, x, depth + 1, name)?;
                        s.push_str(",\n");
                    }
                    (None, Value::Optional(None)) => {}
                    (None, x) => value(&mut String::new(), x, depth, name)?,
                }
            }
            indent(s, depth);
            s.push('}');
        }
    }
    Ok(())
}

/// The include guard of a C header written to `out` (standard output: `lenz_emitted.h`): its
/// file name, upper case, every other character `_`, and `_` before a leading digit.
#[must_use]
pub fn include_guard(out: Option<&Path>) -> String {
    let stem = out
        .and_then(Path::file_name)
        .map_or_else(|| "lenz_emitted.h".into(), |n| n.to_string_lossy());
    let mut g: String = stem
        .chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() {
                c.to_ascii_uppercase()
            } else {
                '_'
            }
        })
        .collect();
    if g.starts_with(|c: char| c.is_ascii_digit()) {
        g.insert(0, '_');
    }
    g
}

#[cfg(test)]
mod tests {
    use super::super::value::{i, u};
    use super::super::{Constant, Emitted, Struct};
    use super::*;

    fn emitted(value: Value) -> Emitted {
        Emitted {
            file: "t.toml".into(),
            system: "t".into(),
            temp_c: 20.0,
            invented: false,
            constants: vec![Constant {
                name: "EMITTED_T".into(),
                rust_config: "T",
                value,
                from: vec!["a comment with */ inside".into()],
            }],
        }
    }

    #[test]
    fn extremes_are_c_literals_of_their_types() {
        let v = Value::Struct(
            Struct::new("T", "LenzT")
                .f("a", i(i32::MIN))
                .f("b", u(u32::MAX))
                .f("c", i(-5)),
        );
        let h = render(&emitted(v), "T_H").unwrap_or_else(|e| panic!("{e}"));
        assert!(h.contains(".a = (-2147483647 - 1),"), "{h}");
        assert!(h.contains(".b = 4294967295u,"), "{h}");
        assert!(h.contains(".c = -5,"), "{h}");
        // A comment cannot end early.
        assert!(h.contains("with * / inside"), "{h}");
    }

    #[test]
    fn a_field_the_c_api_lacks_is_an_error_when_set() {
        let set = Value::Struct(Struct::new("T", "LenzT").f2(
            Some("movement"),
            None,
            Value::Optional(Some(Box::new(i(1)))),
        ));
        let e = render(&emitted(set), "T_H").expect_err("no such C field");
        assert!(
            e.0.contains("EMITTED_T") && e.0.contains("--lang rust"),
            "{e}"
        );
        let unset = Value::Struct(Struct::new("T", "LenzT").f2(
            Some("movement"),
            None,
            Value::Optional(None),
        ));
        let h = render(&emitted(unset), "T_H").unwrap_or_else(|e| panic!("{e}"));
        assert!(!h.contains("movement"), "{h}");
    }
}
