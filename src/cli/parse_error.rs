//! The argument parser's refusals as one sentence each.
//!
//! clap's own messages span three lines (the error, the usage, a tip).
//! tapwright's promise is one sentence naming the option and what is
//! wrong, so [`one_sentence`] rebuilds the message from the error's parts:
//! the option, the value, and the reason our value parsers give (each of
//! them names the allowed range). `--help` and `--version` are not errors
//! and are printed by clap as usual.

use clap::error::{ContextKind, ContextValue, ErrorKind};

/// One sentence (ending in a full stop) for a parse error. `command` is
/// the command line's command words, e.g. "tapwright analyze".
pub fn one_sentence(error: &clap::Error, command: &str) -> String {
    let context = |kind: ContextKind| error.get(kind).map(context_text);
    let see_help = format!("see {command} --help");
    let mut sentence = match error.kind() {
        ErrorKind::InvalidValue | ErrorKind::ValueValidation => {
            let option = option_name(&context(ContextKind::InvalidArg).unwrap_or_default());
            bad_value_sentence(error, &option, context(ContextKind::InvalidValue))
        }
        ErrorKind::UnknownArgument => {
            let argument = context(ContextKind::InvalidArg).unwrap_or_default();
            let suggestion = context(ContextKind::SuggestedArg)
                .map(|s| format!(" (did you mean {s}?)"))
                .unwrap_or_default();
            if argument.starts_with('-') {
                format!("{command} has no option {argument}{suggestion}; {see_help}")
            } else {
                format!("{command} does not take the argument '{argument}'{suggestion}; {see_help}")
            }
        }
        ErrorKind::InvalidSubcommand => {
            let word = context(ContextKind::InvalidSubcommand).unwrap_or_default();
            let suggestion = context(ContextKind::SuggestedSubcommand)
                .map(|s| format!(" (did you mean {s}?)"))
                .unwrap_or_default();
            format!("tapwright has no command '{word}'{suggestion}; see tapwright --help")
        }
        ErrorKind::MissingRequiredArgument => {
            let missing = context(ContextKind::InvalidArg)
                .unwrap_or_default()
                .replace(['<', '>'], "");
            format!("{command} needs {missing}; {see_help}")
        }
        ErrorKind::ArgumentConflict => {
            let first = option_name(&context(ContextKind::InvalidArg).unwrap_or_default());
            match context(ContextKind::PriorArg) {
                Some(other) => format!(
                    "{first} cannot be used together with {}",
                    option_name(&other)
                ),
                None => format!("{first} cannot be used here; {see_help}"),
            }
        }
        _ => format!("{}; {see_help}", first_line_of(error)),
    };
    sentence = sentence.replace('\n', " ");
    if !sentence.ends_with('.') {
        sentence.push('.');
    }
    sentence
}

/// "--band: 100:120 Hz spans less than half an octave", or, for a missing
/// value, "--band needs a value (LOW:HIGH)".
fn bad_value_sentence(error: &clap::Error, option: &str, value: Option<String>) -> String {
    let value = value.unwrap_or_default();
    if value.is_empty() {
        let value_name = error
            .get(ContextKind::InvalidArg)
            .map(context_text)
            .and_then(|arg| {
                arg.split_once(' ')
                    .map(|(_, name)| name.trim_matches(['<', '>']).to_owned())
            })
            .unwrap_or_else(|| "VALUE".to_owned());
        return format!("{option} needs a value ({value_name})");
    }
    if let Some(reason) = std::error::Error::source(error) {
        return format!("{option}: {reason}");
    }
    match error.get(ContextKind::ValidValue) {
        Some(valid) => format!("{option}: '{value}' is not one of {}", context_text(valid)),
        None => format!("{option}: '{value}' is not accepted"),
    }
}

/// "--band <LOW:HIGH>" → "--band"; "<FILE>" stays as it is.
fn option_name(argument: &str) -> String {
    if argument.starts_with('-') {
        argument
            .split([' ', '='])
            .next()
            .unwrap_or(argument)
            .to_owned()
    } else {
        argument.to_owned()
    }
}

fn context_text(value: &ContextValue) -> String {
    match value {
        ContextValue::Strings(values) => values.join(", "),
        ContextValue::StyledStrs(values) => values
            .iter()
            .map(|v| v.to_string())
            .collect::<Vec<_>>()
            .join(", "),
        other => other.to_string(),
    }
}

/// clap's own first line without "error: ", for kinds met too rarely to
/// word by hand.
fn first_line_of(error: &clap::Error) -> String {
    let rendered = error.render().to_string();
    let line = rendered.lines().next().unwrap_or_default();
    line.trim_start_matches("error:").trim().to_owned()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn option_names_lose_their_value_names() {
        assert_eq!(option_name("--band <LOW:HIGH>"), "--band");
        assert_eq!(option_name("--a4=<HZ>"), "--a4");
        assert_eq!(option_name("<FILE>"), "<FILE>");
    }
}
