//! The error of bad or unreachable input: one line naming what the user typed (a flag, a
//! file and key) and the problem. The `lenz` binary ends with exit code 2 on it.

use std::fmt;

/// Bad or unreachable input, as one line for people (the binary's exit code 2).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct InputError(pub String);

impl fmt::Display for InputError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.0)
    }
}

impl std::error::Error for InputError {}

impl InputError {
    /// A plan error, with lenz parameter names replaced by the command-line flags in `flags`
    /// (pairs of parameter name and flag).
    #[must_use]
    pub fn from_lenz(e: lenz::Error, flags: &[(&str, &str)]) -> Self {
        let text = e.to_string();
        let param = e.param();
        let shown = flags
            .iter()
            .find(|(p, _)| *p == param)
            .map_or(param, |(_, f)| *f);
        InputError(text.replacen(param, shown, 1))
    }
}
