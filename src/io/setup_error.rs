//! Why a setup (or a sweep, or a checkpoint's embedded setup) cannot be used.

/// Why a setup cannot be run.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum SetupError {
    /// The text is not a valid setup.
    #[error("{file}:{line}:{column}: {message}")]
    Parse {
        file: String,
        line: usize,
        column: usize,
        message: String,
    },
    /// A field has a value outside its allowed range.
    #[error("{field}: {value} is out of range; allowed: {allowed}")]
    Field {
        field: String,
        value: String,
        allowed: String,
    },
    /// The file could not be read.
    #[error("{file}: {message}")]
    Read { file: String, message: String },
}

impl SetupError {
    /// A field error: the field, the value given, the allowed range.
    pub(crate) fn field(field: &str, value: impl std::fmt::Display, allowed: impl Into<String>) -> Self {
        SetupError::Field {
            field: field.into(),
            value: value.to_string(),
            allowed: allowed.into(),
        }
    }

    /// The field the error is about, if it is about one.
    pub fn field_name(&self) -> Option<&str> {
        match self {
            SetupError::Field { field, .. } => Some(field),
            _ => None,
        }
    }
}

impl From<crate::physics::SpecError> for SetupError {
    fn from(e: crate::physics::SpecError) -> Self {
        SetupError::Field {
            field: e.field.into(),
            value: e.value,
            allowed: e.allowed,
        }
    }
}
