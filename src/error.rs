//! The one error type of the engine. Every message says what is wrong, where (row and
//! column where there is one) and, when it can, what to do next: the page shows it as is.

use std::fmt;

#[derive(Debug, Clone, PartialEq)]
pub enum Error {
    /// The input file cannot be read as a table.
    Input(String),
    /// A settings document is malformed or names something that is not there.
    Settings { field: String, message: String },
    /// The data cannot support the requested computation (too few rows, a constant column...).
    Data(String),
    /// The user (or the page) asked the work to stop.
    Cancelled,
}

pub type Result<T> = std::result::Result<T, Error>;

impl Error {
    pub fn settings(field: impl Into<String>, message: impl Into<String>) -> Self {
        Error::Settings { field: field.into(), message: message.into() }
    }
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Error::Input(m) => write!(f, "{m}"),
            Error::Settings { field, message } => write!(f, "setting '{field}': {message}"),
            Error::Data(m) => write!(f, "{m}"),
            Error::Cancelled => write!(f, "cancelled"),
        }
    }
}

impl std::error::Error for Error {}
