//! Numbers and dates as the window, the build report and the command line
//! write them: a true minus sign, a fixed number of decimals, and "–"
//! instead of "NaN" or "inf", so no unreadable value reaches a person.

/// `decimals` places with a true minus sign; "–" for a value that is not
/// finite.
pub fn num(value: f64, decimals: usize) -> String {
    if value.is_finite() {
        format!("{value:.decimals$}").replace('-', "\u{2212}")
    } else {
        "–".to_owned()
    }
}

/// Like [`num`] with the sign always shown ("+12.3", "−4.0"), except for a
/// value that rounds to zero, which is shown without a sign ("0.0", never
/// "−0.0").
pub fn signed(value: f64, decimals: usize) -> String {
    if !value.is_finite() {
        return "–".to_owned();
    }
    let text = format!("{value:+.decimals$}");
    if text[1..].chars().all(|c| c == '0' || c == '.') {
        return text[1..].to_owned();
    }
    text.replace('-', "\u{2212}")
}

/// A number as a maker would type it: six significant digits at most, no
/// trailing zeros ("2", "86.1235", "0.0025"); "–" when not finite.
pub fn number_text(value: f64) -> String {
    if !value.is_finite() {
        return "–".to_owned();
    }
    if value == 0.0 {
        return "0".to_owned();
    }
    let magnitude = value.abs().log10().floor() as i32;
    let decimals = (5 - magnitude).clamp(0, 9) as usize;
    let text = format!("{value:.decimals$}");
    let text = if text.contains('.') {
        text.trim_end_matches('0').trim_end_matches('.').to_owned()
    } else {
        text
    };
    if text == "-0" {
        "0".to_owned()
    } else {
        text
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_on_screen_are_finite_and_use_a_true_minus() {
        assert_eq!(num(-1.234, 2), "\u{2212}1.23");
        assert_eq!(num(f64::NAN, 2), "–");
        assert_eq!(signed(2.0, 1), "+2.0");
        assert_eq!(signed(f64::INFINITY, 1), "–");
    }

    #[test]
    fn numbers_are_written_as_typed() {
        assert_eq!(number_text(2.0), "2");
        assert_eq!(number_text(86.123_456), "86.1235");
        assert_eq!(number_text(0.0025), "0.0025");
        assert_eq!(number_text(101.325), "101.325");
        assert_eq!(number_text(-0.0), "0");
        assert_eq!(signed(-3.25, 1), "\u{2212}3.2");
        assert_eq!(signed(12.0, 0), "+12");
        assert_eq!(signed(-0.01, 1), "0.0");
        assert_eq!(signed(f64::NAN, 1), "–");
        assert_eq!(num(f64::INFINITY, 1), "–");
    }

    #[test]
    fn dates_read_as_day_and_minute() {
        assert_eq!(date_text("2024-03-06T09:00:00Z"), "2024-03-06 09:00");
    }
}
