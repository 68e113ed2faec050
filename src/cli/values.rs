//! Option values that are numbers, read by the one rule of `text::typed`
//! (spaces ignored, a decimal comma read as a point, "NaN" and infinities
//! refused); each refusal names the option and, where there is one, the
//! range.

use crate::text::read_number;

/// The number given to `option` ("--temp-c"), or one sentence naming it:
/// "--temp-c \"abc\" is not a number".
pub fn parse_number(option: &str, text: &str) -> anyhow::Result<f64> {
    read_number(text).map_err(|problem| anyhow::anyhow!("{option} {}", problem.describe(text)))
}

/// [`parse_number`] for an option that may be left out.
pub fn parse_optional(option: &str, text: &Option<String>) -> anyhow::Result<Option<f64>> {
    text.as_deref().map(|t| parse_number(option, t)).transpose()
}

/// A number within `range`, or a reason that names the range and unit.
pub fn parse_in_range(
    text: &str,
    range: std::ops::RangeInclusive<f64>,
    unit: &str,
) -> Result<f64, String> {
    let value = read_number(text).map_err(|_| {
        format!(
            "'{text}' is not a number; give {} to {} {unit}",
            range.start(),
            range.end()
        )
    })?;
    if range.contains(&value) {
        Ok(value)
    } else {
        Err(format!(
            "{value} {unit} is outside {} to {} {unit}",
            range.start(),
            range.end()
        ))
    }
}

/// A whole number within `range`, or a reason that names the range.
pub fn parse_count(text: &str, range: std::ops::RangeInclusive<u32>) -> Result<u32, String> {
    let (low, high) = (range.start(), range.end());
    match text.trim().parse::<i64>() {
        Ok(value) if (i64::from(*low)..=i64::from(*high)).contains(&value) => Ok(value as u32),
        Ok(value) => Err(format!("{value} is outside {low} to {high}")),
        Err(_) => Err(format!(
            "'{text}' is not a whole number from {low} to {high}"
        )),
    }
}
