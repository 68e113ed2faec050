//! Sentences for people: an error and its causes as one line, a message
//! with a capital letter and a full stop.

/// Joins an error and its causes into one line, each cause said once:
/// "reading x.wav: not a WAV file." The first letter is left as it is (the
/// command line prints it after "tapwright: ").
pub fn one_sentence(error: &anyhow::Error) -> String {
    let mut parts: Vec<String> = Vec::new();
    for cause in error.chain() {
        let text = cause.to_string();
        if !parts.iter().any(|p| p.contains(&text)) {
            parts.push(text);
        }
    }
    let mut sentence = parts.join(": ");
    if !sentence.ends_with('.') {
        sentence.push('.');
    }
    sentence
}

/// Any error of the library (and its causes) as one sentence for the
/// window: capital first letter, full stop at the end.
pub fn error_sentence<E>(error: E) -> String
where
    E: std::error::Error + Send + Sync + 'static,
{
    sentence(&one_sentence(&anyhow::Error::new(error)))
}

/// A message as one sentence: capital first letter, full stop at the end
/// (unless it ends in "!" or "?").
pub fn sentence(text: &str) -> String {
    let mut out = capitalised(text.trim());
    if !out.ends_with(['.', '!', '?']) {
        out.push('.');
    }
    out
}

/// The text with its first letter in capitals.
pub fn capitalised(text: &str) -> String {
    let mut chars = text.chars();
    match chars.next() {
        Some(first) => first.to_uppercase().chain(chars).collect(),
        None => String::new(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn an_error_and_its_causes_are_one_line_each_cause_once() {
        let error = anyhow::anyhow!("not a WAV file").context("reading x.wav");
        assert_eq!(one_sentence(&error), "reading x.wav: not a WAV file.");
        let repeated = anyhow::anyhow!("disk full").context("cannot save a.csv: disk full");
        assert_eq!(one_sentence(&repeated), "cannot save a.csv: disk full.");
    }

    #[test]
    fn a_message_becomes_a_sentence() {
        assert_eq!(sentence("  the file is empty "), "The file is empty.");
        assert_eq!(sentence("Saved."), "Saved.");
        assert_eq!(sentence("really?"), "Really?");
        assert_eq!(capitalised("ärger"), "Ärger");
        assert_eq!(capitalised(""), "");
    }
}
