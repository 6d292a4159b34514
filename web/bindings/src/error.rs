//! The one error type of the bindings: a message for the page, and the field it is about.
//!
//! Every core error reaches JS as a thrown `Error` whose message is the core's `Display` text.
//! An error about a field of the fit request (or of the session's grid) starts with
//! `field <name>: `, so that the page can put the message at that field.

use std::fmt;

/// An error the page shows: the field it is about, if any, and what is wrong and accepted.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct WebError {
    /// The field (snake_case, as in the fit request), or `None` for a general error.
    pub field: Option<&'static str>,
    /// What is wrong and what is accepted, without the field prefix.
    pub message: String,
}

impl WebError {
    /// An error not tied to a field.
    pub fn general(message: impl Into<String>) -> Self {
        Self { field: None, message: message.into() }
    }

    /// An error about `field`.
    pub fn at_field(field: &'static str, message: impl Into<String>) -> Self {
        Self { field: Some(field), message: message.into() }
    }
}

impl fmt::Display for WebError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self.field {
            Some(field) => write!(f, "field {field}: {}", self.message),
            None => f.write_str(&self.message),
        }
    }
}

impl std::error::Error for WebError {}

impl From<bandwright::request::RequestError> for WebError {
    fn from(error: bandwright::request::RequestError) -> Self {
        Self::at_field(error.field(), error.message())
    }
}

/// Core errors without a field keep their own text.
macro_rules! general_from {
    ($($error:ty),* $(,)?) => {
        $(impl From<$error> for WebError {
            fn from(error: $error) -> Self {
                Self::general(error.to_string())
            }
        })*
    };
}

general_from!(
    bandwright::DesignError,
    bandwright::ParseError,
    bandwright::CircuitError,
    bandwright::synthesis::SynthesisError,
    bandwright::share::ShareError,
    bandwright_plot::PlotError,
);

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn field_errors_carry_the_prefix_the_page_looks_for() {
        assert_eq!(WebError::at_field("cutoff", "give a frequency").to_string(), "field cutoff: give a frequency");
        assert_eq!(WebError::general("no such part").to_string(), "no such part");
    }
}
