//! Reading a number a person typed, in a field of the window or as a value
//! on the command line: one rule everywhere, and one way of saying what is
//! wrong with it.

use super::sentences::sentence;

/// What is wrong with a typed number.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum NumberProblem {
    /// Nothing (or only spaces) was typed.
    Empty,
    /// The text is not a number.
    NotANumber,
    /// "NaN" or an infinity, which Rust's float parser accepts.
    NotFinite,
}

impl NumberProblem {
    /// What is wrong, said after the name of the value: "is empty: type a
    /// number", "\"abc\" is not a number", "must be an ordinary number".
    pub fn describe(self, text: &str) -> String {
        match self {
            Self::Empty => "is empty: type a number".to_owned(),
            Self::NotANumber => format!("\"{}\" is not a number", text.trim()),
            // Not echoed: "NaN" and "inf" mean nothing to a maker.
            Self::NotFinite => "must be an ordinary number".to_owned(),
        }
    }
}

/// The rule: spaces around the number are ignored, a decimal comma is read
/// as a point ("2,5" is 2.5), and "NaN" and infinities are refused.
pub fn read_number(text: &str) -> Result<f64, NumberProblem> {
    let trimmed = text.trim();
    if trimmed.is_empty() {
        return Err(NumberProblem::Empty);
    }
    match trimmed.replace(',', ".").parse::<f64>() {
        Ok(value) if value.is_finite() => Ok(value),
        Ok(_) => Err(NumberProblem::NotFinite),
        Err(_) => Err(NumberProblem::NotANumber),
    }
}

/// A number typed into the field `what` ("the volume", "--temp-c"), or
/// one sentence naming the field: "The volume \"abc\" is not a number."
pub fn parse_number(what: &str, text: &str) -> Result<f64, String> {
    read_number(text).map_err(|problem| sentence(&format!("{what} {}", problem.describe(text))))
}

/// Like [`parse_number`], but an empty field is no number (None) rather
/// than a problem.
pub fn parse_optional_number(what: &str, text: &str) -> Result<Option<f64>, String> {
    match read_number(text) {
        Err(NumberProblem::Empty) => Ok(None),
        other => other
            .map(Some)
            .map_err(|problem| sentence(&format!("{what} {}", problem.describe(text)))),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_are_read_with_one_sentence_on_refusal() {
        assert_eq!(parse_number("the volume", " 2,5 "), Ok(2.5));
        for bad in ["abc", "1.2.3", "2 L"] {
            let message = parse_number("the volume", bad).unwrap_err();
            assert!(message.starts_with("The volume \""), "{message}");
            assert!(message.ends_with("is not a number."), "{message}");
        }
        for bad in ["NaN", "inf", "-inf"] {
            assert_eq!(
                parse_number("the volume", bad).unwrap_err(),
                "The volume must be an ordinary number."
            );
        }
        assert_eq!(
            parse_number("the volume", "  ").unwrap_err(),
            "The volume is empty: type a number."
        );
    }

    #[test]
    fn typed_numbers_accept_a_decimal_comma() {
        assert_eq!(parse_optional_number("the mass", "67,5"), Ok(Some(67.5)));
        assert_eq!(parse_optional_number("the mass", ""), Ok(None));
        assert!(parse_optional_number("the mass", "abc").is_err());
        assert!(parse_optional_number("the mass", "inf").is_err());
    }
}
