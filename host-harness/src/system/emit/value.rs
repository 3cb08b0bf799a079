//! The language-neutral form of an emitted constant: a tree of named-field structs, integers,
//! arrays and flags, mirroring a kernel's `Raw` struct (Rust) and the C API's `Lenz*Raw`
//! struct (C). The renderers in [`super::rust`] and [`super::c`] print it.

/// One value of a raw struct.
#[derive(Debug, Clone, PartialEq)]
pub enum Value {
    /// An integer; `unsigned` for the unsigned field types (a `u` suffix in C).
    Int {
        /// The value.
        v: i64,
        /// The field's type is unsigned.
        unsigned: bool,
    },
    /// A flag: `true`/`false` in Rust, `1`/`0` in C.
    Bool(bool),
    /// A fixed-length array.
    Array(Vec<Value>),
    /// A named-field struct.
    Struct(Struct),
    /// A Rust enum variant (path) and its C encoding.
    Variant {
        /// Rust path, e.g. `lenz::drive::PullInSource::Estimate`.
        rust: &'static str,
        /// The C field's value.
        c: i64,
    },
    /// A Rust `Option` (C structs have no such field).
    Optional(Option<Box<Value>>),
}

/// A named-field struct with its Rust and C type names.
#[derive(Debug, Clone, PartialEq)]
pub struct Struct {
    /// Rust type path, e.g. `lenz::kernel::EstimatorRaw`.
    pub rust: &'static str,
    /// C type name, e.g. `LenzEstimatorRaw`.
    pub c: &'static str,
    /// The fields, in declaration order.
    pub fields: Vec<Field>,
}

/// One field; a name is `None` where the language's struct has no such field.
#[derive(Debug, Clone, PartialEq)]
pub struct Field {
    /// Field name in the Rust struct.
    pub rust: Option<&'static str>,
    /// Field name in the C struct.
    pub c: Option<&'static str>,
    /// The value.
    pub value: Value,
}

impl Struct {
    pub(super) fn new(rust: &'static str, c: &'static str) -> Self {
        Struct {
            rust,
            c,
            fields: Vec::new(),
        }
    }

    /// A field of the same name in both languages.
    pub(super) fn f(mut self, name: &'static str, value: Value) -> Self {
        self.fields.push(Field {
            rust: Some(name),
            c: Some(name),
            value,
        });
        self
    }

    /// A field with its own name in each language (or in one only).
    pub(super) fn f2(
        mut self,
        rust: Option<&'static str>,
        c: Option<&'static str>,
        value: Value,
    ) -> Self {
        self.fields.push(Field { rust, c, value });
        self
    }
}

pub(super) fn i(v: impl Into<i64>) -> Value {
    Value::Int {
        v: v.into(),
        unsigned: false,
    }
}

pub(super) fn u(v: impl Into<i64>) -> Value {
    Value::Int {
        v: v.into(),
        unsigned: true,
    }
}

pub(super) fn ints(v: &[i32]) -> Value {
    Value::Array(v.iter().map(|&x| i(x)).collect())
}

pub(super) fn uints(v: &[u32]) -> Value {
    Value::Array(v.iter().map(|&x| u(x)).collect())
}
