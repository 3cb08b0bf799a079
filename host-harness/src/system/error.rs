//! Why a system could not be planned or run.

pub use crate::scenario::run::RunSetupError as SetupError;

impl SetupError {
    /// An error with this text.
    #[must_use]
    pub fn new(text: impl Into<String>) -> SetupError {
        SetupError(text.into())
    }
}
