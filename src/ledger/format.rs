//! How the window and the build report write numbers and dates: the same
//! text in both places.

/// `decimals` places with a true minus sign; "–" for a value that is not
/// finite.
pub fn num(value: f64, decimals: usize) -> String {
    if value.is_finite() {
        format!("{value:.decimals$}").replace('-', "\u{2212}")
    } else {
        "–".to_owned()
    }
}

/// Like [`num`] with the sign always shown.
pub fn signed(value: f64, decimals: usize) -> String {
    if value.is_finite() {
        format!("{value:+.decimals$}").replace('-', "\u{2212}")
    } else {
        "–".to_owned()
    }
}

/// "2024-03-06T09:00:00Z" → "2024-03-06 09:00".
pub fn date_text(rfc3339: &str) -> String {
    let trimmed = rfc3339.trim_end_matches('Z');
    match trimmed.split_once('T') {
        Some((date, time)) => format!("{date} {}", time.get(..5).unwrap_or(time)),
        None => trimmed.to_owned(),
    }
}

/// The text with its first letter in capitals.
pub fn capitalised(text: &str) -> String {
    let mut chars = text.chars();
    match chars.next() {
        Some(first) => first.to_uppercase().chain(chars).collect(),
        None => String::new(),
    }
}
